/**
 * How far each digital realisation of a curve strays from the analog curve, for the
 * workbench's plot: the render filter that makes access copies (the FIR, built exactly
 * as the render job builds it: designRenderFilterFromModel at the transfer's rate) and
 * the listening preview's IIR sections (designIir, as lib/audition plays them).
 * Gain digital − analog in dB and phase in degrees over 20 Hz–20 kHz, with each one's
 * worst value on the plotted grid and the designer's own dense measurement.
 */
import { analogResponse, buildAnalogModel } from "./analog";
import { logGrid, wrapDeg } from "./grid";
import { designIirFromModel } from "./iir";
import { designRenderFilterFromModel, firDeviation } from "./render-filter";
import { sosResponse } from "./sos";
import { resolveCurve } from "./spec";
import type { CurveSpec } from "./types";

export const DEVIATION_LOW_HZ = 20;
export const DEVIATION_HIGH_HZ = 20_000;

export interface DeviationTrace {
  hz: number[];
  gainDb: number[];
  phaseDeg: number[];
  /** Worst values on the plotted grid, with where they fall. */
  worstDb: number;
  worstDbHz: number;
  worstDeg: number;
  worstDegHz: number;
  /** The designer's own dense measurement over 20 Hz–20 kHz (every FFT bin for the FIR, 1200 points for the sections). */
  reportedDb: number;
  reportedDeg: number;
}

export interface FilterDeviations {
  sampleRateHz: number;
  /** The access-copy render filter. */
  fir: DeviationTrace & { taps: number; delaySamples: number };
  /** The listening preview's second-order sections. */
  iir: DeviationTrace & { sections: number; order: number };
}

function trace(
  hz: number[],
  gainDb: number[],
  phaseDeg: number[],
  reportedDb: number,
  reportedDeg: number,
): DeviationTrace {
  let wi = 0;
  let pi = 0;
  for (let i = 1; i < hz.length; i++) {
    if (Math.abs(gainDb[i]) > Math.abs(gainDb[wi])) wi = i;
    if (Math.abs(phaseDeg[i]) > Math.abs(phaseDeg[pi])) pi = i;
  }
  return {
    hz,
    gainDb,
    phaseDeg,
    worstDb: gainDb[wi],
    worstDbHz: hz[wi],
    worstDeg: phaseDeg[pi],
    worstDegHz: hz[pi],
    reportedDb,
    reportedDeg,
  };
}

/** Both realisations at one sample rate, measured on `points` log-spaced frequencies. Throws CurveError for a curve that cannot be built. */
export function filterDeviations(spec: CurveSpec, sampleRateHz: number, points = 300): FilterDeviations {
  const model = buildAnalogModel(resolveCurve(spec));
  const grid = Array.from(logGrid(DEVIATION_LOW_HZ, DEVIATION_HIGH_HZ, points));

  const iir = designIirFromModel(model, sampleRateHz);
  const analog = analogResponse(model, grid);
  const digital = sosResponse(iir.sos, grid, sampleRateHz);
  const iirTrace = trace(
    grid,
    grid.map((_, i) => digital.gainDb[i] - analog.gainDb[i]),
    grid.map((_, i) => wrapDeg(digital.phaseDeg[i] - analog.phaseDeg[i])),
    iir.maxErrorDb,
    iir.maxPhaseErrorDeg,
  );

  const fir = designRenderFilterFromModel(model, sampleRateHz);
  const d = firDeviation(model, fir.taps, sampleRateHz, fir.delaySamples, grid);
  const firTrace = trace(d.hz, d.gainDb, d.phaseDeg, fir.maxErrorDb, fir.maxPhaseErrorDeg);

  return {
    sampleRateHz,
    fir: { ...firTrace, taps: fir.taps.length, delaySamples: fir.delaySamples },
    iir: { ...iirTrace, sections: iir.sos.length, order: iir.order },
  };
}
