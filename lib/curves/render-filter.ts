/**
 * Digital realisation 2: the render filter for archival access copies, which
 * must follow the analog curve in magnitude AND phase.
 *
 * Method: a frequency-sampled FIR. The target on an N-point FFT grid is
 *
 *   T(f) = H(j2πf) · W(f) · e^{−j2πf·D/fs}
 *
 * with H the normalised analog curve, D an integer delay (samples) and W a
 * raised-cosine taper from the top of the pass band (max(20 kHz, 0.45·fs)) to
 * Nyquist. The inverse FFT gives the taps. Why this works: the FIR's response
 * equals T exactly at the N bins, and between bins it equals T up to the
 * time-domain aliasing of T's ideal impulse response (the frequency-sampling
 * theorem: the N-point inverse DFT of samples of a spectrum is its impulse
 * response wrapped modulo N). That response is
 *   - causal after D apart from the pre-ringing of the taper, which decays fast
 *     because W makes T smooth (C¹) at Nyquist, where the analog curve would
 *     otherwise jump; D is chosen as a multiple of fs/(transition width);
 *   - a decaying tail after D set by the slowest pole (shelf or high-pass,
 *     e^{−t/τ}), so N is chosen from ~18·τmax and doubled until the measured
 *     errors meet the targets.
 * Phase is matched because the target carries the analog phase itself; only
 * the integer delay D, which the renderer removes, is added.
 *
 * The errors are measured, not assumed: the taps are zero-padded to 4·N and
 * transformed, and every bin in 20 Hz–20 kHz (and to the pass-band top) is
 * compared with the analog curve after removing the delay.
 */
import { analogComplexInto, buildAnalogModel } from "./analog";
import type { AnalogModel } from "./analog";
import { inverseToReal, nextPowerOfTwo, realSpectrum } from "./fft";
import { resolveCurve, validateSampleRate } from "./spec";
import { CurveError } from "./types";
import type { CurveSpec } from "./types";

export interface RenderFilter {
  kind: "fir";
  sampleRateHz: number;
  taps: Float64Array;
  /** Constant delay (samples) the renderer removes so the output lines up sample for sample. */
  delaySamples: number;
  /** Worst gain deviation from the analog curve over 20 Hz–20 kHz (dB). */
  maxErrorDb: number;
  /** Worst phase deviation over 20 Hz–20 kHz after removing delaySamples (degrees). */
  maxPhaseErrorDeg: number;
  /** Same, over 20 Hz up to the pass-band top (max(20 kHz, 0.45·fs)). */
  wideBand: { upToHz: number; maxErrorDb: number; maxPhaseErrorDeg: number };
  /** Spacing of the measurement grid (Hz) and the number of points it had in 20 Hz–20 kHz. */
  measuredOn: { spacingHz: number; points: number };
}

export const RENDER_TARGET_DB = 0.005;
export const RENDER_TARGET_DEG = 0.5;
const MAX_TAPS = 1 << 20;

/** Delay in multiples of fs / (transition width): ~60 cycles of the taper's ringing, which decays as 1/n³. */
const PRE_RING_CYCLES = 60;
/** Initial length in multiples of the slowest time constant: e^{−18} ≈ 1.5e−8 of the tail is left. */
const TAIL_TIME_CONSTANTS = 18;

export interface RenderFilterOptions {
  /** Override the initial FFT length (power of two); mainly for tests. */
  initialLength?: number;
  /** Stop doubling at this length. */
  maxLength?: number;
}

function buildTaps(
  model: AnalogModel,
  fs: number,
  n: number,
  delay: number,
  passHighHz: number,
): Float64Array {
  const half = n / 2;
  const freqs = new Float64Array(half + 1);
  for (let k = 0; k <= half; k++) freqs[k] = (k * fs) / n;
  const re = new Float64Array(half + 1);
  const im = new Float64Array(half + 1);
  analogComplexInto(model, freqs, re, im);
  const spec = new Float64Array(2 * n);
  const nyq = fs / 2;
  for (let k = 0; k <= half; k++) {
    const f = freqs[k];
    const w = f <= passHighHz ? 1 : 0.5 * (1 + Math.cos((Math.PI * (f - passHighHz)) / (nyq - passHighHz)));
    // e^{−j2πkD/N}: reduce k·D modulo N first so the angle stays exact.
    const ang = (-2 * Math.PI * ((k * delay) % n)) / n;
    const c = Math.cos(ang);
    const s = Math.sin(ang);
    let tr = w * (re[k] * c - im[k] * s);
    let ti = w * (re[k] * s + im[k] * c);
    if (k === 0 || k === half) ti = 0; // real at DC and Nyquist (W = 0 there anyway at Nyquist)
    if (k === half) tr = 0;
    spec[2 * k] = tr;
    spec[2 * k + 1] = ti;
    if (k > 0 && k < half) {
      spec[2 * (n - k)] = tr;
      spec[2 * (n - k) + 1] = -ti;
    }
  }
  return inverseToReal(spec, n);
}

/** Measure the FIR against the analog curve on a 4× zero-padded FFT grid. */
export function measureFir(
  model: AnalogModel,
  taps: ArrayLike<number>,
  fs: number,
  delaySamples: number,
  lowHz: number,
  highHz: number,
): { maxErrorDb: number; maxPhaseErrorDeg: number; spacingHz: number; points: number } {
  const size = nextPowerOfTwo(4 * taps.length);
  const spec = realSpectrum(taps, size);
  const k0 = Math.ceil((lowHz * size) / fs);
  const k1 = Math.floor((highHz * size) / fs);
  const count = k1 - k0 + 1;
  const freqs = new Float64Array(count);
  for (let i = 0; i < count; i++) freqs[i] = ((k0 + i) * fs) / size;
  const re = new Float64Array(count);
  const im = new Float64Array(count);
  analogComplexInto(model, freqs, re, im);
  let maxErrorDb = 0;
  let maxPhaseErrorDeg = 0;
  for (let i = 0; i < count; i++) {
    const k = k0 + i;
    // Remove the delay: multiply by e^{+j2πkD/size}.
    const ang = (2 * Math.PI * ((k * delaySamples) % size)) / size;
    const c = Math.cos(ang);
    const s = Math.sin(ang);
    const fr = spec[2 * k] * c - spec[2 * k + 1] * s;
    const fi = spec[2 * k] * s + spec[2 * k + 1] * c;
    // Ratio FIR / analog as one complex number: its log-magnitude and angle are the errors.
    const d2 = re[i] * re[i] + im[i] * im[i];
    const qr = (fr * re[i] + fi * im[i]) / d2;
    const qi = (fi * re[i] - fr * im[i]) / d2;
    const eDb = Math.abs(10 * Math.log10(qr * qr + qi * qi));
    const eDeg = Math.abs((Math.atan2(qi, qr) * 180) / Math.PI);
    if (eDb > maxErrorDb) maxErrorDb = eDb;
    if (eDeg > maxPhaseErrorDeg) maxPhaseErrorDeg = eDeg;
  }
  return { maxErrorDb, maxPhaseErrorDeg, spacingHz: fs / size, points: count };
}

/**
 * The FIR's deviation from the analog curve at chosen frequencies (for plotting): gain
 * FIR − analog in dB and phase in degrees, after removing the delay. Measured as
 * measureFir does, on a 4× zero-padded FFT of the taps; each frequency is taken at its
 * nearest bin inside the span asked for, and that bin's frequency is returned (spacing
 * fs / 4N, a few hertz at most), duplicates dropped.
 */
export function firDeviation(
  model: AnalogModel,
  taps: ArrayLike<number>,
  fs: number,
  delaySamples: number,
  frequenciesHz: ArrayLike<number>,
): { hz: number[]; gainDb: number[]; phaseDeg: number[] } {
  const size = nextPowerOfTwo(4 * taps.length);
  const spec = realSpectrum(taps, size);
  // Bins inside the span asked for (as measureFir keeps to its band), so the ends are not rounded outwards.
  let lowHz = Infinity;
  let highHz = 0;
  for (let i = 0; i < frequenciesHz.length; i++) {
    lowHz = Math.min(lowHz, frequenciesHz[i]);
    highHz = Math.max(highHz, frequenciesHz[i]);
  }
  const kLow = Math.max(1, Math.ceil((lowHz * size) / fs));
  const kHigh = Math.min(size / 2, Math.floor((highHz * size) / fs));
  const bins: number[] = [];
  for (let i = 0; i < frequenciesHz.length; i++) {
    const k = Math.min(kHigh, Math.max(kLow, Math.round((frequenciesHz[i] * size) / fs)));
    if (bins[bins.length - 1] !== k) bins.push(k);
  }
  const hz = bins.map((k) => (k * fs) / size);
  const re = new Float64Array(hz.length);
  const im = new Float64Array(hz.length);
  analogComplexInto(model, hz, re, im);
  const gainDb: number[] = [];
  const phaseDeg: number[] = [];
  bins.forEach((k, i) => {
    const ang = (2 * Math.PI * ((k * delaySamples) % size)) / size;
    const c = Math.cos(ang);
    const s = Math.sin(ang);
    const fr = spec[2 * k] * c - spec[2 * k + 1] * s;
    const fi = spec[2 * k] * s + spec[2 * k + 1] * c;
    const d2 = re[i] * re[i] + im[i] * im[i];
    const qr = (fr * re[i] + fi * im[i]) / d2;
    const qi = (fi * re[i] - fr * im[i]) / d2;
    gainDb.push(10 * Math.log10(qr * qr + qi * qi));
    phaseDeg.push((Math.atan2(qi, qr) * 180) / Math.PI);
  });
  return { hz, gainDb, phaseDeg };
}

export function designRenderFilterFromModel(
  model: AnalogModel,
  sampleRateHz: number,
  options: RenderFilterOptions = {},
): RenderFilter {
  validateSampleRate(sampleRateHz);
  const fs = sampleRateHz;
  const passHighHz = Math.max(20_000, 0.45 * fs);
  const transitionHz = fs / 2 - passHighHz;
  const delay = Math.ceil((PRE_RING_CYCLES * fs) / transitionHz);
  const slowestTauS = Math.max(0, ...model.poleTausS);
  let n =
    options.initialLength ?? nextPowerOfTwo(Math.max(1024, delay + TAIL_TIME_CONSTANTS * slowestTauS * fs));
  const maxLength = options.maxLength ?? MAX_TAPS;
  for (;;) {
    const taps = buildTaps(model, fs, n, delay, passHighHz);
    const narrow = measureFir(model, taps, fs, delay, 20, 20_000);
    const meets =
      narrow.maxErrorDb <= 0.8 * RENDER_TARGET_DB && narrow.maxPhaseErrorDeg <= 0.8 * RENDER_TARGET_DEG;
    if (meets || 2 * n > maxLength) {
      if (!meets && options.maxLength === undefined) {
        throw new CurveError(
          "renderFilter",
          `The render filter could not reach ${RENDER_TARGET_DB} dB / ${RENDER_TARGET_DEG}° ` +
            `within ${n} taps (reached ${narrow.maxErrorDb.toFixed(4)} dB, ${narrow.maxPhaseErrorDeg.toFixed(3)}°).`,
        );
      }
      const wide = passHighHz > 20_000 ? measureFir(model, taps, fs, delay, 20, passHighHz) : narrow;
      return {
        kind: "fir",
        sampleRateHz: fs,
        taps,
        delaySamples: delay,
        maxErrorDb: narrow.maxErrorDb,
        maxPhaseErrorDeg: narrow.maxPhaseErrorDeg,
        wideBand: {
          upToHz: passHighHz,
          maxErrorDb: wide.maxErrorDb,
          maxPhaseErrorDeg: wide.maxPhaseErrorDeg,
        },
        measuredOn: { spacingHz: narrow.spacingHz, points: narrow.points },
      };
    }
    n *= 2;
  }
}

/** Validate a spec and design its render filter at a sample rate. */
export function designRenderFilter(
  spec: CurveSpec,
  sampleRateHz: number,
  options?: RenderFilterOptions,
): RenderFilter {
  return designRenderFilterFromModel(buildAnalogModel(resolveCurve(spec)), sampleRateHz, options);
}
