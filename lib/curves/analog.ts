/**
 * The analog playback curve of DESIGN.md ("The curve model"):
 *
 *   H(s) = K · (1 + s·τt) / ((1 + s·τs)(1 + s·τr)) · [s·τh / (1 + s·τh)] · [1 + s·τu]
 *
 * A curve with a turnover but no shelf has τs → ∞: the shelf factor becomes an
 * integrator 1/(s·τs) (bass boost all the way to DC). Validation only lets that
 * through with a high-pass, whose s·τh cancels the integrator, leaving
 * K'·(1 + s·τt)/((1 + s·τh)(1 + s·τr)): the high-pass pole ends the bass boost.
 *
 * Evaluated factor by factor in time-constant form, which keeps full precision
 * at every frequency, and also given in zero/pole/gain form (rad/s) with the
 * usual convention H(s) = k · Π(s − zᵢ) / Π(s − pⱼ).
 */
import { resolveCurve } from "./spec";
import type { CurveSpec, ResolvedCurve } from "./types";
import { dbToLinear } from "./units";

const TWO_PI = 2 * Math.PI;
const RAD_TO_DEG = 180 / Math.PI;

export interface AnalogModel {
  curve: ResolvedCurve;
  /** Time constants (s) of the (1 + s·τ) numerator factors: turnover, ultrasonic. */
  zeroTausS: number[];
  /** Time constants (s) of the 1/(1 + s·τ) factors: shelf, rolloff, high-pass pole. */
  poleTausS: number[];
  /**
   * Time constant (s) of the s·τh numerator factor (zero at DC), or null: present
   * for a high-pass unless a missing shelf's integrator cancels it.
   */
  dcZeroTauS: number | null;
  /** K of the time-constant form, set so the gain at reference.hz equals reference.db. */
  gainK: number;
  /** Zeros in rad/s (real; 0 for the high-pass). */
  zerosRadS: number[];
  /** Poles in rad/s (real, negative). */
  polesRadS: number[];
  /** Gain of the zero/pole/gain form H(s) = k·Π(s − z)/Π(s − p). */
  k: number;
}

export interface ComplexArrays {
  re: Float64Array;
  im: Float64Array;
}

/** |H0(j2πf)|² and phase (rad) of the un-normalised (K = 1) curve. */
function factorResponse(
  zeroTaus: number[],
  poleTaus: number[],
  hpTau: number | null,
  hz: number,
): { mag2: number; phaseRad: number } {
  const w = TWO_PI * hz;
  let mag2 = 1;
  let phase = 0;
  for (const tau of zeroTaus) {
    const x = w * tau;
    mag2 *= 1 + x * x;
    phase += Math.atan(x);
  }
  for (const tau of poleTaus) {
    const x = w * tau;
    mag2 /= 1 + x * x;
    phase -= Math.atan(x);
  }
  if (hpTau !== null) {
    // s·τh alone: magnitude ωτh, phase +90°. Its pole is already in poleTaus.
    const x = w * hpTau;
    mag2 *= x * x;
    phase += Math.PI / 2;
  }
  return { mag2, phaseRad: phase };
}

export function buildAnalogModel(curve: ResolvedCurve): AnalogModel {
  const zeroTausS: number[] = [];
  const poleTausS: number[] = [];
  if (curve.turnover) zeroTausS.push(curve.turnover.filterTauUs * 1e-6);
  if (curve.ultrasonic) zeroTausS.push(curve.ultrasonic.filterTauUs * 1e-6);
  if (curve.shelf) poleTausS.push(curve.shelf.filterTauUs * 1e-6);
  if (curve.rolloff) poleTausS.push(curve.rolloff.filterTauUs * 1e-6);
  const highpassTauS = curve.highpass ? curve.highpass.filterTauUs * 1e-6 : null;
  if (highpassTauS !== null) poleTausS.push(highpassTauS);
  // No shelf under a turnover: integrator 1/s, cancelled by the high-pass's s (validated).
  const integrator = curve.turnover !== null && curve.shelf === null;
  const dcZeroTauS = integrator ? null : highpassTauS;

  const ref = factorResponse(zeroTausS, poleTausS, dcZeroTauS, curve.reference.hz);
  const gainK = dbToLinear(curve.reference.db) / Math.sqrt(ref.mag2);

  // (1 + sτ) = τ·(s + 1/τ): zero at −1/τ, factor τ into the gain; likewise for poles.
  const zerosRadS = zeroTausS.map((t) => -1 / t);
  const polesRadS = poleTausS.map((t) => -1 / t);
  let k = gainK;
  for (const t of zeroTausS) k *= t;
  for (const t of poleTausS) k /= t;
  if (dcZeroTauS !== null) {
    zerosRadS.push(0);
    k *= dcZeroTauS;
  }
  return { curve, zeroTausS, poleTausS, dcZeroTauS, gainK, zerosRadS, polesRadS, k };
}

/** Resolve (validate) a spec and build its analog model. */
export function analogModel(spec: CurveSpec): AnalogModel {
  return buildAnalogModel(resolveCurve(spec));
}

/** Normalised gain (dB) at one frequency. */
export function analogGainDb(model: AnalogModel, hz: number): number {
  const r = factorResponse(model.zeroTausS, model.poleTausS, model.dcZeroTauS, hz);
  return 10 * Math.log10(r.mag2) + 20 * Math.log10(model.gainK);
}

/** Phase (rad, continuous, not wrapped) at one frequency. */
export function analogPhaseRad(model: AnalogModel, hz: number): number {
  return factorResponse(model.zeroTausS, model.poleTausS, model.dcZeroTauS, hz).phaseRad;
}

export interface AnalogResponse {
  hz: number[];
  gainDb: number[];
  phaseDeg: number[];
  re: number[];
  im: number[];
}

/** Complex response, magnitude (dB) and phase (degrees, continuous) at the given frequencies. */
export function analogResponse(model: AnalogModel, frequenciesHz: ArrayLike<number>): AnalogResponse {
  const out: AnalogResponse = { hz: [], gainDb: [], phaseDeg: [], re: [], im: [] };
  const kDb = 20 * Math.log10(model.gainK);
  for (let i = 0; i < frequenciesHz.length; i++) {
    const hz = frequenciesHz[i];
    const r = factorResponse(model.zeroTausS, model.poleTausS, model.dcZeroTauS, hz);
    const mag = model.gainK * Math.sqrt(r.mag2);
    out.hz.push(hz);
    out.gainDb.push(10 * Math.log10(r.mag2) + kDb);
    out.phaseDeg.push(r.phaseRad * RAD_TO_DEG);
    out.re.push(mag * Math.cos(r.phaseRad));
    out.im.push(mag * Math.sin(r.phaseRad));
  }
  return out;
}

/** Fill re/im with the normalised complex response (fast path for the filter designers). */
export function analogComplexInto(
  model: AnalogModel,
  frequenciesHz: ArrayLike<number>,
  re: Float64Array,
  im: Float64Array,
): void {
  for (let i = 0; i < frequenciesHz.length; i++) {
    const r = factorResponse(model.zeroTausS, model.poleTausS, model.dcZeroTauS, frequenciesHz[i]);
    const mag = model.gainK * Math.sqrt(r.mag2);
    re[i] = mag * Math.cos(r.phaseRad);
    im[i] = mag * Math.sin(r.phaseRad);
  }
}

export const PEAK_SEARCH_LOW_HZ = 10;
export const PEAK_SEARCH_HIGH_HZ = 30_000;

/**
 * Highest gain between 10 Hz and 30 kHz: the headroom a render needs.
 * A log grid finds the neighbourhood, golden-section search on log f refines it.
 */
export function peakGain(model: AnalogModel): { peakGainDb: number; peakHz: number } {
  const n = 400;
  const lo = Math.log(PEAK_SEARCH_LOW_HZ);
  const hi = Math.log(PEAK_SEARCH_HIGH_HZ);
  let best = -Infinity;
  let bestI = 0;
  for (let i = 0; i <= n; i++) {
    const g = analogGainDb(model, Math.exp(lo + ((hi - lo) * i) / n));
    if (g > best) {
      best = g;
      bestI = i;
    }
  }
  let a = lo + ((hi - lo) * Math.max(0, bestI - 1)) / n;
  let b = lo + ((hi - lo) * Math.min(n, bestI + 1)) / n;
  const phi = (Math.sqrt(5) - 1) / 2;
  let c = b - phi * (b - a);
  let d = a + phi * (b - a);
  let gc = analogGainDb(model, Math.exp(c));
  let gd = analogGainDb(model, Math.exp(d));
  for (let it = 0; it < 60 && b - a > 1e-10; it++) {
    if (gc > gd) {
      b = d;
      d = c;
      gd = gc;
      c = b - phi * (b - a);
      gc = analogGainDb(model, Math.exp(c));
    } else {
      a = c;
      c = d;
      gc = gd;
      d = a + phi * (b - a);
      gd = analogGainDb(model, Math.exp(d));
    }
  }
  const candidates = [
    { x: (a + b) / 2, g: analogGainDb(model, Math.exp((a + b) / 2)) },
    { x: lo + ((hi - lo) * bestI) / n, g: best },
  ];
  const top = candidates[0].g >= candidates[1].g ? candidates[0] : candidates[1];
  return { peakGainDb: top.g, peakHz: Math.exp(top.x) };
}
