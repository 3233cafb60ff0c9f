/**
 * The curves the bench and the review offer for comparison, in the plot and the player,
 * each named as the rest of the product names it (curveChoiceName, lib/curves).
 */
import { curveChoiceName, mergeCurve } from "@/lib/curves";
import type { Candidate, CurveChoiceJson, PresetJson } from "./types";

/** A recorded curve choice, labelled with what it is on this page ("Recorded", "Before"). */
export function choiceCandidate(id: string, role: string, choice: CurveChoiceJson): Candidate {
  return { id, label: `${role}: ${curveChoiceName(choice)}`, spec: choice.spec };
}

/** A preset at the side's cut and transfer speeds, named as a choice of it would be. */
export function presetCandidate(preset: PresetJson, speeds: { cut: number; transfer: number }): Candidate {
  return {
    id: `preset:${preset.id}`,
    label: curveChoiceName({
      presetName: preset.name,
      presetVersion: preset.version,
      cutSpeedRpm: speeds.cut,
      transferSpeedRpm: speeds.transfer,
    }),
    spec: mergeCurve(preset.spec, {}, speeds.cut, speeds.transfer),
  };
}

/** What a curator compares: the chosen curve and, if the side came back, the one before it. */
export function reviewCandidates(
  current: CurveChoiceJson | null,
  previous: CurveChoiceJson | null,
): Candidate[] {
  return [
    ...(current ? [choiceCandidate("current", "Chosen", current)] : []),
    ...(previous ? [choiceCandidate("previous", "Before", previous)] : []),
  ];
}
