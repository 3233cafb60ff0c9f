"use client";
// The disc form's panels of fields, apart from the sides (disc-sides-panel.tsx): identity
// (with the accession chooser and its inline "new accession"), carrier, date and condition.
// Each takes the form's labelled controls (disc-form-controls.tsx); DiscForm holds the state.
import { useState } from "react";
import type { UseFormRegister } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { controlClass, FieldShell } from "@/components/ui/field";
import { Panel } from "@/components/ui/panel";
import {
  conditionFlags,
  conditionGrades,
  discBases,
  discFormats,
  formatLabels,
  nominalSpeeds,
} from "@/lib/validation/catalogue";
import { AccessionForm } from "./accession-form";
import type { DiscControls } from "./disc-form-controls";
import type { DiscFormValues } from "./disc-form-values";
import { baseLabels, conditionLabels, flagLabels, isoDateInputProps, speedLabel } from "./format";
import type { AccessionJson } from "./types";

/** Formats whose base (lacquer, glass…) is recorded. */
export const basesAllowed = new Set(["instantaneous_lacquer", "transcription", "other"]);

export function DiscIdentityPanel({
  controls: { err, input, select },
  accessions,
  accessionsLoading,
  onAccessionCreated,
}: {
  controls: DiscControls;
  accessions: AccessionJson[];
  accessionsLoading: boolean;
  /** A new accession was made inline: choose it once the list has it. */
  onAccessionCreated: (a: AccessionJson) => void;
}) {
  const [newAccession, setNewAccession] = useState(false);
  return (
    <Panel title="Identity">
      <div className="grid gap-4 md:grid-cols-2">
        <div className="space-y-2 md:col-span-2">
          <div className="flex flex-wrap items-end gap-3">
            <div className="min-w-64 flex-1">
              {select(
                "accessionId",
                "Accession",
                [
                  ["", accessionsLoading ? "Loading…" : "Choose the accession"],
                  ...accessions.map((a): [string, string] => [a.id, `${a.identifier} — ${a.source}`]),
                ],
                {},
                "The batch this disc arrived in.",
              )}
            </div>
            <Button
              type="button"
              variant="secondary"
              size="sm"
              className="mb-6"
              aria-expanded={newAccession}
              onClick={() => setNewAccession((v) => !v)}
              data-testid="toggle-new-accession"
            >
              {newAccession ? "Close" : "New accession…"}
            </Button>
          </div>
          {newAccession ? (
            <div className="rounded-lg border border-dashed border-paper-edge bg-paper/50 p-4">
              <AccessionForm
                testId="inline-accession"
                onCancel={() => setNewAccession(false)}
                onCreated={(a) => {
                  onAccessionCreated(a);
                  setNewAccession(false);
                }}
              />
            </div>
          ) : null}
        </div>
        {input("shelfMark", "Shelf mark", {
          autoComplete: "off",
          className: controlClass(!!err("shelfMark"), "font-mono"),
        })}
        {input("labelName", "Label")}
        {input("catalogueNumber", "Catalogue number", {
          className: controlClass(!!err("catalogueNumber"), "font-mono"),
        })}
      </div>
    </Panel>
  );
}

export function DiscCarrierPanel({
  controls: { err, input, select },
  format,
  speed,
  speedOther,
  onSpeedChoice,
}: {
  controls: DiscControls;
  format: string;
  speed: string;
  /** Whether the speed is typed ("Other…") rather than one of the nominal speeds. */
  speedOther: boolean;
  /** A nominal speed chosen from the list, or "other" to type one. */
  onSpeedChoice: (choice: string) => void;
}) {
  return (
    <Panel title="Carrier">
      <div className="grid gap-4 md:grid-cols-3">
        {select(
          "format",
          "Format",
          discFormats.map((f) => [f, formatLabels[f]]),
        )}
        {basesAllowed.has(format) ? (
          select(
            "base",
            "Base",
            [["", "Not recorded"], ...discBases.map((b): [string, string] => [b, baseLabels[b]])],
            {},
            "Lacquer and transcription discs only.",
          )
        ) : (
          <FieldShell
            id="disc-base-na"
            label="Base"
            hint="Recorded for lacquer and transcription discs only."
          >
            <input
              id="disc-base-na"
              disabled
              value="—"
              className={controlClass(false, "opacity-60")}
              readOnly
            />
          </FieldShell>
        )}
        {input("diameterIn", "Diameter (inches)", { inputMode: "decimal" })}
        <div className="space-y-1.5">
          <label htmlFor="disc-speed-choice" className="block text-sm font-medium">
            Nominal speed (rpm)
          </label>
          <select
            id="disc-speed-choice"
            value={speedOther ? "other" : speed}
            onChange={(e) => onSpeedChoice(e.target.value)}
            className={controlClass(!!err("nominalSpeedRpm"))}
          >
            {nominalSpeeds.map((s) => (
              <option key={s} value={String(s)}>
                {speedLabel(s)}
              </option>
            ))}
            <option value="other">Other…</option>
          </select>
          {!speedOther && err("nominalSpeedRpm") ? (
            <p className="text-xs font-medium text-alarm">{err("nominalSpeedRpm")}</p>
          ) : null}
        </div>
        {speedOther ? input("nominalSpeedRpm", "Other speed (rpm)", { inputMode: "decimal" }) : null}
        {select("groove", "Groove", [
          ["coarse", "Coarse groove"],
          ["micro", "Microgroove"],
        ])}
        {select("cut", "Cut", [
          ["lateral", "Lateral"],
          ["vertical", "Vertical (hill-and-dale)"],
        ])}
      </div>
    </Panel>
  );
}

export function DiscDatePanel({ controls: { input } }: { controls: DiscControls }) {
  return (
    <Panel title="Date">
      <div className="grid gap-4 md:grid-cols-3">
        {input("recordingDate", "Recording date (YYYY-MM-DD)", isoDateInputProps, "When known exactly.")}
        {input("recordedFromYear", "Recorded from (year)", {
          inputMode: "numeric",
          placeholder: "e.g. 1931",
        })}
        {input("recordedToYear", "Recorded to (year)", {
          inputMode: "numeric",
          placeholder: "e.g. 1933",
        })}
      </div>
    </Panel>
  );
}

export function DiscConditionPanel({
  controls: { err, select },
  register,
}: {
  controls: DiscControls;
  register: UseFormRegister<DiscFormValues>;
}) {
  return (
    <Panel title="Condition">
      <div className="space-y-4">
        {select(
          "conditionGrade",
          "Condition",
          conditionGrades.map((g) => [g, conditionLabels[g]]),
        )}
        <fieldset>
          <legend className="mb-1.5 text-sm font-medium">Condition flags</legend>
          <div className="grid grid-cols-2 gap-1.5">
            {conditionFlags.map((f) => (
              <label key={f} className="flex items-center gap-2 text-sm">
                <input
                  type="checkbox"
                  value={f}
                  {...register("conditionFlags")}
                  className="h-4 w-4 accent-shellac"
                />
                {flagLabels[f]}
              </label>
            ))}
          </div>
        </fieldset>
        <FieldShell id="disc-conditionNotes" label="Condition notes" errors={err("conditionNotes")}>
          <textarea
            id="disc-conditionNotes"
            rows={3}
            className={controlClass(!!err("conditionNotes"))}
            {...register("conditionNotes")}
          />
        </FieldShell>
        <FieldShell
          id="disc-handlingNotes"
          label="Handling notes"
          errors={err("handlingNotes")}
          hint="Anything the next person to handle it should know."
        >
          <textarea
            id="disc-handlingNotes"
            rows={3}
            aria-describedby="disc-handlingNotes-hint"
            className={controlClass(!!err("handlingNotes"))}
            {...register("handlingNotes")}
          />
        </FieldShell>
      </div>
    </Panel>
  );
}
