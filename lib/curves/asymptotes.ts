/**
 * Straight-line (Bode asymptote) description of a curve: each (1 + sτ) factor
 * contributes 0 dB/decade below 1/(2πτ) and ±20 dB/decade above (20·log10 of
 * ωτ per decade of ω); s·τh contributes +20 dB/decade everywhere, which its own
 * pole cancels above the high-pass corner (a turnover without a shelf has an
 * integrator instead, which that s cancels: see analog.ts).
 */
import type { AnalogModel } from "./analog";
import type { CornerName } from "./types";
import { usToHz } from "./units";

export interface AsymptoteCorner {
  parameter: CornerName;
  hz: number;
  /** +20 for a zero (turnover, ultrasonic), −20 for a pole (shelf, rolloff, high-pass). */
  slopeChangeDbPerDecade: number;
  /** Level of the straight-line approximation at this corner (dB, same normalisation as the curve). */
  asymptoteGainDb: number;
}

export interface AsymptoteSegment {
  /** null = from 0 Hz. */
  fromHz: number | null;
  /** null = to infinity. */
  toHz: number | null;
  slopeDbPerDecade: number;
}

export interface Asymptotes {
  corners: AsymptoteCorner[];
  segments: AsymptoteSegment[];
}

export function asymptotes(model: AnalogModel): Asymptotes {
  const { curve } = model;
  const list: { parameter: CornerName; tauS: number; sign: number }[] = [];
  if (curve.turnover) list.push({ parameter: "turnover", tauS: curve.turnover.filterTauUs * 1e-6, sign: +1 });
  if (curve.ultrasonic)
    list.push({ parameter: "ultrasonic", tauS: curve.ultrasonic.filterTauUs * 1e-6, sign: +1 });
  if (curve.shelf) list.push({ parameter: "shelf", tauS: curve.shelf.filterTauUs * 1e-6, sign: -1 });
  if (curve.rolloff) list.push({ parameter: "rolloff", tauS: curve.rolloff.filterTauUs * 1e-6, sign: -1 });
  if (curve.highpass) list.push({ parameter: "highpass", tauS: curve.highpass.filterTauUs * 1e-6, sign: -1 });
  list.sort((a, b) => b.tauS - a.tauS);

  const asymptoteDb = (hz: number): number => {
    const w = 2 * Math.PI * hz;
    let db = 20 * Math.log10(model.gainK);
    for (const t of model.zeroTausS) db += 20 * Math.log10(Math.max(1, w * t));
    for (const t of model.poleTausS) db -= 20 * Math.log10(Math.max(1, w * t));
    if (model.dcZeroTauS !== null) db += 20 * Math.log10(w * model.dcZeroTauS);
    return db;
  };

  let slope = model.dcZeroTauS !== null ? 20 : 0;
  const segments: AsymptoteSegment[] = [];
  const corners: AsymptoteCorner[] = [];
  let from: number | null = null;
  for (const c of list) {
    const hz = usToHz(c.tauS * 1e6);
    segments.push({ fromHz: from, toHz: hz, slopeDbPerDecade: slope });
    slope += 20 * c.sign;
    corners.push({
      parameter: c.parameter,
      hz,
      slopeChangeDbPerDecade: 20 * c.sign,
      asymptoteGainDb: asymptoteDb(hz),
    });
    from = hz;
  }
  segments.push({ fromHz: from, toHz: null, slopeDbPerDecade: slope });
  return { corners, segments };
}
