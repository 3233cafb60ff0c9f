/** Candidates compared at matched loudness in the bench's player and spectra. */
import { analogGainDb, analogModel, type CurveSpec } from "@/lib/curves";

/** Gain (dB) that brings a curve to 0 dB at 1 kHz, whatever reference level the lab set for it. */
export function matchAt1kHzDb(spec: CurveSpec): number {
  return -analogGainDb(analogModel(spec), 1000);
}
