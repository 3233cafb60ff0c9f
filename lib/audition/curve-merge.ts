/**
 * The effective curve of a choice, as the server records it: the preset
 * version's values, then the overrides for these sides, then the speed ratio
 * transfer ÷ cut. Kept in step with the server's merge so what the bench plots
 * and plays is what gets recorded.
 */
import { analogGainDb, analogModel, type CurveSpec } from "@/lib/curves";

export function mergeCurve(presetSpec: CurveSpec | null, overrides: Partial<CurveSpec>, cutSpeedRpm: number, transferSpeedRpm: number): CurveSpec {
  const merged: CurveSpec = { ...(presetSpec ?? {}) };
  for (const [k, v] of Object.entries(overrides) as [keyof CurveSpec, unknown][]) {
    if (v !== undefined) (merged as Record<string, unknown>)[k] = v;
  }
  merged.speedRatio = transferSpeedRpm / cutSpeedRpm;
  return merged;
}

/** Gain (dB) that brings a curve to 0 dB at 1 kHz, whatever reference level the lab set for it: candidates compared at matched loudness. */
export function matchAt1kHzDb(spec: CurveSpec): number {
  return -analogGainDb(analogModel(spec), 1000);
}
