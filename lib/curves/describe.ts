/**
 * Everything the computation service returns for a curve (and optionally a
 * sample rate) in one JSON-friendly object.
 */
import { buildAnalogModel, peakGain } from "./analog";
import { asymptotes } from "./asymptotes";
import type { Asymptotes } from "./asymptotes";
import { designIirFromModel } from "./iir";
import type { IirDesign } from "./iir";
import { resolveCurve } from "./spec";
import type { CurveSpec, ResolvedCurve } from "./types";

export interface CurveDescription {
  curve: ResolvedCurve;
  zerosRadS: number[];
  polesRadS: number[];
  /** Gain of H(s) = k·Π(s − z)/Π(s − p). */
  k: number;
  /** K of the time-constant form in DESIGN.md. */
  gainK: number;
  peakGainDb: number;
  peakHz: number;
  asymptotes: Asymptotes;
  iir?: IirDesign;
}

export function describeCurve(spec: CurveSpec, sampleRateHz?: number): CurveDescription {
  const model = buildAnalogModel(resolveCurve(spec));
  const peak = peakGain(model);
  const out: CurveDescription = {
    curve: model.curve,
    zerosRadS: model.zerosRadS,
    polesRadS: model.polesRadS,
    k: model.k,
    gainK: model.gainK,
    peakGainDb: peak.peakGainDb,
    peakHz: peak.peakHz,
    asymptotes: asymptotes(model),
  };
  if (sampleRateHz !== undefined) out.iir = designIirFromModel(model, sampleRateHz);
  return out;
}
