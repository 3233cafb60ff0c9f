/**
 * Digital realisation 1: IIR second-order sections for the interactive editor
 * and quick renders.
 *
 * Why not a textbook mapping: the bilinear transform compresses the top octave
 * (≈13.5 dB off near 20 kHz at 44.1 kHz for RIAA) and matched-z ignores the
 * response beyond Nyquist (≈3 dB off). Instead a fixed-order minimum-phase
 * cascade is fitted to the analog magnitude by least squares on the dB error
 * over a frequency grid dense in log f and in the top octave, starting from the
 * matched-z roots (z = e^{sT}, the classical impulse-invariant root mapping).
 *
 * Stability and minimum phase hold by construction: each second-order
 * polynomial 1 + c1·z⁻¹ + c2·z⁻² is written through reflection coefficients
 * k1 = tanh(u1), k2 = tanh(u2) with c1 = k1(1 + k2), c2 = k2; |k| < 1 for both
 * is exactly the condition for both roots to lie inside the unit circle
 * (Schur–Cohn / the stability triangle, e.g. Oppenheim & Schafer,
 * Discrete-Time Signal Processing, lattice structures). The high-pass keeps an
 * exact zero at z = 1 (DC) and one real pole p = tanh(v).
 *
 * The solver is a small Levenberg–Marquardt with the analytic Jacobian
 * (d 20·log10|P(e^{jω})| / dc_m = (20/ln 10)·Re(e^{−jmω}/P)), followed by a
 * few Lawson reweighting passes that push the least-squares solution towards
 * the minimax one. Everything runs on Float64Arrays so a design takes a few ms.
 */
import { analogGainDb, analogPhaseRad, buildAnalogModel } from "./analog";
import type { AnalogModel } from "./analog";
import { linearGrid, logGrid, mergeGrids, wrapDeg } from "./grid";
import type { SosRow } from "./sos";
import { sosComplexAt } from "./sos";
import { resolveCurve, validateSampleRate } from "./spec";
import type { CurveSpec } from "./types";

const DB_PER_NEPER_SQ = 20 / Math.LN10;

export interface IirDesign {
  sampleRateHz: number;
  sos: SosRow[];
  /** Worst |digital − analog| gain over 20 Hz–20 kHz, measured on a dense grid. */
  maxErrorDb: number;
  /** Worst |digital − analog| phase over 20 Hz–20 kHz (the minimum-phase fit cannot follow the analog phase near Nyquist). */
  maxPhaseErrorDeg: number;
  /** The same measurements from 20 Hz up to max(20 kHz, 0.45 × rate). */
  wideBand: { upToHz: number; maxErrorDb: number; maxPhaseErrorDeg: number };
  /** Where the measurements were taken. */
  measuredOn: { points: number; lowHz: number; highHz: number };
  /** Order of the cascade (number of poles). */
  order: number;
  iterations: number;
}

export const MEASURE_LOW_HZ = 20;
export const MEASURE_HIGH_HZ = 20_000;

interface FitProblem {
  cosW: Float64Array;
  sinW: Float64Array;
  cos2W: Float64Array;
  sin2W: Float64Array;
  target: Float64Array;
  weight: Float64Array;
  /** Fixed dB contribution of the exact DC zero (1 − z⁻¹), or zeros. */
  fixedDb: Float64Array;
  /** Scratch: product of |P|² ratios per point. */
  ratio: Float64Array;
  biquads: number;
  highpass: boolean;
}

/** Polynomial coefficients (c1, c2) and their partial derivatives w.r.t. (u1, u2). */
function reflect(u1: number, u2: number): { c1: number; c2: number; d11: number; d12: number; d22: number } {
  const k1 = Math.tanh(u1);
  const k2 = Math.tanh(u2);
  const dk1 = 1 - k1 * k1;
  const dk2 = 1 - k2 * k2;
  return { c1: k1 * (1 + k2), c2: k2, d11: (1 + k2) * dk1, d12: k1 * dk2, d22: dk2 };
}

/** Inverse of reflect for a polynomial with real roots r1, r2 inside the unit circle. */
function unreflect(r1: number, r2: number): [number, number] {
  const c1 = -(r1 + r2);
  const c2 = r1 * r2;
  const k2 = c2;
  const k1 = c1 / (1 + k2);
  const clamp = (k: number) => Math.max(-0.999999999, Math.min(0.999999999, k));
  return [Math.atanh(clamp(k1)), Math.atanh(clamp(k2))];
}

/**
 * Model value (dB) at every grid point and, when jac is given, its Jacobian
 * (row-major, points × params). Params: [gDb, per biquad (zu1, zu2, pu1, pu2)…, hp v].
 */
function evaluate(p: FitProblem, params: Float64Array, model: Float64Array, jac: Float64Array | null): void {
  const n = p.target.length;
  const np = params.length;
  // Multiply the |P|² ratios per point and take one logarithm at the end
  // (logs dominate the cost; the products stay far inside float64 range).
  const ratio = p.ratio;
  ratio.fill(1);
  if (jac) {
    jac.fill(0);
    for (let i = 0; i < n; i++) jac[i * np] = 1;
  }
  for (let b = 0; b < p.biquads; b++) {
    for (let side = 0; side < 2; side++) {
      const off = 1 + 4 * b + 2 * side;
      const zeroSide = side === 0;
      const k1 = Math.tanh(params[off]);
      const k2 = Math.tanh(params[off + 1]);
      const c1 = k1 * (1 + k2);
      const c2 = k2;
      const dk1 = 1 - k1 * k1;
      const dk2 = 1 - k2 * k2;
      const d11 = (1 + k2) * dk1;
      const d12 = k1 * dk2;
      const sign = zeroSide ? DB_PER_NEPER_SQ : -DB_PER_NEPER_SQ;
      for (let i = 0; i < n; i++) {
        // P(e^{jω}) = 1 + c1 e^{-jω} + c2 e^{-2jω}
        const cw = p.cosW[i];
        const sw = p.sinW[i];
        const c2w = p.cos2W[i];
        const s2w = p.sin2W[i];
        const pr = 1 + c1 * cw + c2 * c2w;
        const pi = -(c1 * sw + c2 * s2w);
        const m2 = pr * pr + pi * pi;
        if (zeroSide) ratio[i] *= m2;
        else ratio[i] /= m2;
        if (jac) {
          // Re(e^{-jmω}/P) = Re(e^{-jmω}·conj(P))/|P|²
          const g1 = (sign * (cw * pr - sw * pi)) / m2;
          const g2 = (sign * (c2w * pr - s2w * pi)) / m2;
          const row = i * np + off;
          jac[row] = g1 * d11;
          jac[row + 1] = g1 * d12 + g2 * dk2;
        }
      }
    }
  }
  if (p.highpass) {
    const off = np - 1;
    const pole = Math.tanh(params[off]);
    const dPole = 1 - pole * pole;
    for (let i = 0; i < n; i++) {
      // 1 − p·e^{-jω}
      const qr = 1 - pole * p.cosW[i];
      const qi = pole * p.sinW[i];
      const m2 = qr * qr + qi * qi;
      ratio[i] /= m2;
      if (jac) {
        const g = -(p.cosW[i] * qr - p.sinW[i] * qi) / m2;
        jac[i * np + off] = -DB_PER_NEPER_SQ * g * dPole;
      }
    }
  }
  const g0 = params[0];
  for (let i = 0; i < n; i++) model[i] = p.fixedDb[i] + g0 + DB_PER_NEPER_SQ * 0.5 * Math.log(ratio[i]);
}

/** Solve the small symmetric positive system A·x = b in place (Cholesky); returns false if not positive definite. */
function choleskySolve(a: Float64Array, b: Float64Array, n: number): boolean {
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j];
    for (let k = 0; k < j; k++) d -= a[j * n + k] * a[j * n + k];
    if (!(d > 0)) return false;
    d = Math.sqrt(d);
    a[j * n + j] = d;
    for (let i = j + 1; i < n; i++) {
      let s = a[i * n + j];
      for (let k = 0; k < j; k++) s -= a[i * n + k] * a[j * n + k];
      a[i * n + j] = s / d;
    }
  }
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= a[i * n + k] * b[k];
    b[i] = s / a[i * n + i];
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = b[i];
    for (let k = i + 1; k < n; k++) s -= a[k * n + i] * b[k];
    b[i] = s / a[i * n + i];
  }
  return true;
}

function weightedCost(p: FitProblem, model: Float64Array): number {
  let c = 0;
  for (let i = 0; i < model.length; i++) {
    const r = model[i] - p.target[i];
    c += p.weight[i] * r * r;
  }
  return c;
}

/** Levenberg–Marquardt on the weighted dB residuals. Returns iterations used. */
function levenbergMarquardt(p: FitProblem, params: Float64Array, maxIterations: number): number {
  const n = p.target.length;
  const np = params.length;
  const model = new Float64Array(n);
  const jac = new Float64Array(n * np);
  const jtj = new Float64Array(np * np);
  const a = new Float64Array(np * np);
  const g = new Float64Array(np);
  const step = new Float64Array(np);
  const trial = new Float64Array(np);
  const trialModel = new Float64Array(n);
  let lambda = 1e-3;
  evaluate(p, params, model, jac);
  let cost = weightedCost(p, model);
  let it = 0;
  for (; it < maxIterations; it++) {
    jtj.fill(0);
    g.fill(0);
    for (let i = 0; i < n; i++) {
      const w = p.weight[i];
      const r = model[i] - p.target[i];
      const row = i * np;
      for (let j = 0; j < np; j++) {
        const wj = w * jac[row + j];
        g[j] += wj * r;
        for (let k = 0; k <= j; k++) jtj[j * np + k] += wj * jac[row + k];
      }
    }
    let accepted = false;
    for (let tries = 0; tries < 12 && !accepted; tries++) {
      for (let j = 0; j < np; j++) {
        for (let k = 0; k <= j; k++) a[j * np + k] = jtj[j * np + k];
        a[j * np + j] = jtj[j * np + j] * (1 + lambda) + 1e-300;
        step[j] = -g[j];
      }
      if (choleskySolve(a, step, np)) {
        for (let j = 0; j < np; j++) trial[j] = params[j] + step[j];
        evaluate(p, trial, trialModel, null);
        const trialCost = weightedCost(p, trialModel);
        if (Number.isFinite(trialCost) && trialCost < cost) {
          const relGain = (cost - trialCost) / cost;
          params.set(trial);
          cost = trialCost;
          lambda = Math.max(lambda / 5, 1e-12);
          accepted = true;
          evaluate(p, params, model, jac);
          if (relGain < 1e-7) return it + 1;
          break;
        }
      }
      lambda *= 8;
    }
    if (!accepted) break;
  }
  return it;
}

/** Dense measurement grid: log-spaced plus a linear top region where the errors live. */
function measurementGrid(lowHz: number, highHz: number): Float64Array {
  return mergeGrids(logGrid(lowHz, highHz, 800), linearGrid(highHz / 4, highHz, 400));
}

/** Worst gain and phase deviation of a cascade from the analog curve on a grid. */
export function measureSosError(
  model: AnalogModel,
  sos: readonly SosRow[],
  sampleRateHz: number,
  frequenciesHz: ArrayLike<number>,
): { maxErrorDb: number; maxPhaseErrorDeg: number } {
  let maxErrorDb = 0;
  let maxPhaseErrorDeg = 0;
  for (let i = 0; i < frequenciesHz.length; i++) {
    const hz = frequenciesHz[i];
    const { re, im } = sosComplexAt(sos, hz, sampleRateHz);
    const dDb = 10 * Math.log10(re * re + im * im) - analogGainDb(model, hz);
    const dDeg = wrapDeg(((Math.atan2(im, re) - analogPhaseRad(model, hz)) * 180) / Math.PI);
    if (Math.abs(dDb) > maxErrorDb) maxErrorDb = Math.abs(dDb);
    if (Math.abs(dDeg) > maxPhaseErrorDeg) maxPhaseErrorDeg = Math.abs(dDeg);
  }
  return { maxErrorDb, maxPhaseErrorDeg };
}

/** Fit the cascade to an analog model at one rate. */
export function designIirFromModel(model: AnalogModel, sampleRateHz: number): IirDesign {
  validateSampleRate(sampleRateHz);
  const fs = sampleRateHz;
  const T = 1 / fs;
  const nyquist = fs / 2;
  const fitHighHz = Math.min(Math.max(MEASURE_HIGH_HZ, 0.45 * fs), 0.47 * fs);
  const fitLowHz = 10;

  // Grid: log-spaced over the whole band, plus linear points over the top two
  // octaves where the digital response must bend away from matched-z.
  const logPart = logGrid(fitLowHz, fitHighHz, 100);
  const linPart = new Float64Array(50);
  for (let i = 0; i < linPart.length; i++)
    linPart[i] = fitHighHz * (0.25 + (0.75 * i) / (linPart.length - 1));
  const grid = mergeGrids(logPart, linPart);
  const n = grid.length;

  const highpass = model.dcZeroTauS !== null;
  const biquads = 2;
  const problem: FitProblem = {
    cosW: new Float64Array(n),
    sinW: new Float64Array(n),
    cos2W: new Float64Array(n),
    sin2W: new Float64Array(n),
    target: new Float64Array(n),
    weight: new Float64Array(n).fill(1),
    fixedDb: new Float64Array(n),
    ratio: new Float64Array(n),
    biquads,
    highpass,
  };
  for (let i = 0; i < n; i++) {
    const w = (2 * Math.PI * grid[i]) / fs;
    problem.cosW[i] = Math.cos(w);
    problem.sinW[i] = Math.sin(w);
    problem.cos2W[i] = Math.cos(2 * w);
    problem.sin2W[i] = Math.sin(2 * w);
    problem.target[i] = analogGainDb(model, grid[i]);
    // |1 − e^{-jω}| = 2·sin(ω/2): the exact DC zero of the high-pass.
    if (highpass) problem.fixedDb[i] = 20 * Math.log10(2 * Math.sin(w / 2));
  }

  // Matched-z start: analog root s → digital root e^{sT}. Spare roots start
  // near the origin, at distinct places so their Jacobian columns differ.
  const zeroRoots = model.zeroTausS.map((t) => Math.exp(-T / t));
  // With a DC zero the high-pass pole gets its own first-order section; it is
  // the last entry of poleTausS (analog.ts).
  const nonHpPoleTaus = highpass ? model.poleTausS.slice(0, -1) : model.poleTausS.slice();
  const poleRoots = nonHpPoleTaus.map((t) => Math.exp(-T / t));
  const spareZeros = [-0.3, 0.2, -0.1, 0.1];
  const spareRootsPoles = [-0.2, 0.3, -0.05, 0.05];
  zeroRoots.sort((a, b) => b - a);
  poleRoots.sort((a, b) => b - a);
  while (zeroRoots.length < 2 * biquads) zeroRoots.push(spareZeros[zeroRoots.length]);
  while (poleRoots.length < 2 * biquads) poleRoots.push(spareRootsPoles[poleRoots.length]);

  const np = 1 + 4 * biquads + (highpass ? 1 : 0);
  const params = new Float64Array(np);
  for (let b = 0; b < biquads; b++) {
    const [z1, z2] = unreflect(zeroRoots[2 * b], zeroRoots[2 * b + 1]);
    const [p1, p2] = unreflect(poleRoots[2 * b], poleRoots[2 * b + 1]);
    params[1 + 4 * b] = z1;
    params[2 + 4 * b] = z2;
    params[3 + 4 * b] = p1;
    params[4 + 4 * b] = p2;
  }
  if (highpass) params[np - 1] = Math.atanh(Math.exp(-T / (model.dcZeroTauS as number)));
  const scratch = new Float64Array(n);
  evaluate(problem, params, scratch, null);
  let offset = 0;
  for (let i = 0; i < n; i++) offset += problem.target[i] - scratch[i];
  params[0] = offset / n;

  let iterations = levenbergMarquardt(problem, params, 80);
  // Lawson passes: weight each point by its current error so the largest
  // errors shrink, moving from least squares towards minimax.
  for (let pass = 0; pass < 3; pass++) {
    evaluate(problem, params, scratch, null);
    let sum = 0;
    for (let i = 0; i < n; i++) {
      problem.weight[i] *= Math.abs(scratch[i] - problem.target[i]) + 1e-9;
      sum += problem.weight[i];
    }
    for (let i = 0; i < n; i++) problem.weight[i] *= n / sum;
    iterations += levenbergMarquardt(problem, params, 15);
  }

  // Assemble the sections; the overall gain goes into the first one.
  const sos: SosRow[] = [];
  let gain = Math.pow(10, params[0] / 20);
  for (let b = 0; b < biquads; b++) {
    const z = reflect(params[1 + 4 * b], params[2 + 4 * b]);
    const p = reflect(params[3 + 4 * b], params[4 + 4 * b]);
    sos.push([gain, gain * z.c1, gain * z.c2, 1, p.c1, p.c2]);
    gain = 1;
  }
  if (highpass) sos.push([1, -1, 0, 1, -Math.tanh(params[np - 1]), 0]);

  // Normalise exactly like the analog curve: the gain at the reference equals
  // reference.db (when the reference lies inside the digital band).
  const refHz = model.curve.reference.hz;
  if (refHz < 0.45 * fs) {
    const { re, im } = sosComplexAt(sos, refHz, fs);
    const corr = Math.pow(10, (model.curve.reference.db - 10 * Math.log10(re * re + im * im)) / 20);
    for (let j = 0; j < 3; j++) sos[0][j] *= corr;
  }

  const narrow = measurementGrid(MEASURE_LOW_HZ, MEASURE_HIGH_HZ);
  const narrowErr = measureSosError(model, sos, fs, narrow);
  const wideHigh = Math.max(MEASURE_HIGH_HZ, 0.45 * fs);
  const wideErr =
    wideHigh > MEASURE_HIGH_HZ
      ? (() => {
          const top = measureSosError(model, sos, fs, measurementGrid(MEASURE_HIGH_HZ, wideHigh));
          return {
            maxErrorDb: Math.max(top.maxErrorDb, narrowErr.maxErrorDb),
            maxPhaseErrorDeg: Math.max(top.maxPhaseErrorDeg, narrowErr.maxPhaseErrorDeg),
          };
        })()
      : narrowErr;
  void nyquist;
  return {
    sampleRateHz: fs,
    sos,
    maxErrorDb: narrowErr.maxErrorDb,
    maxPhaseErrorDeg: narrowErr.maxPhaseErrorDeg,
    wideBand: { upToHz: wideHigh, ...wideErr },
    measuredOn: { points: narrow.length, lowHz: MEASURE_LOW_HZ, highHz: MEASURE_HIGH_HZ },
    order: 2 * biquads + (highpass ? 1 : 0),
    iterations,
  };
}

/** Validate a spec and design its IIR sections at a sample rate. */
export function designIir(spec: CurveSpec, sampleRateHz: number): IirDesign {
  const model = buildAnalogModel(resolveCurve(spec));
  return designIirFromModel(model, sampleRateHz);
}
