/**
 * Averaged magnitude spectrum of a window of the flat transfer (Welch's method:
 * Hann-windowed segments overlapping by half, power averaged; P. D. Welch, IEEE
 * Trans. Audio Electroacoust. 15(2), 1967), and the same spectrum seen through
 * each candidate curve.
 */
import { analogModel, analogResponse, type CurveSpec } from "@/lib/curves";
import { fftFor } from "@/lib/curves/fft";

export interface Spectrum {
  /** Band centre frequencies (Hz), log-spaced. */
  hz: Float64Array;
  /** Level per band, dB relative to a full-scale sine. */
  db: Float64Array;
}

const SEGMENT = 8192;
/** Enough segments for a steady average; more only costs time. */
const MAX_SEGMENTS = 600;

/** Welch power spectrum folded onto `bands` log-spaced bands between lowHz and the top of the band. */
export function welchSpectrum(signal: Float32Array, sampleRateHz: number, bands = 240, lowHz = 15): Spectrum {
  const n = SEGMENT;
  const fft = fftFor(n);
  const window = new Float64Array(n);
  let wSum = 0;
  for (let i = 0; i < n; i++) {
    window[i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / n);
    wSum += window[i];
  }
  const hop = n / 2;
  const available = signal.length >= n ? Math.floor((signal.length - n) / hop) + 1 : 0;
  const segments = Math.min(available, MAX_SEGMENTS);
  const stride = segments > 0 && available > segments ? ((available - 1) / (segments - 1)) * hop : hop;
  const power = new Float64Array(n / 2 + 1);
  const input = new Float64Array(n);
  const out = new Float64Array(2 * n);
  for (let s = 0; s < segments; s++) {
    const start = Math.floor(s * stride);
    for (let i = 0; i < n; i++) input[i] = (signal[start + i] ?? 0) * window[i];
    fft.realTransform(out, input);
    for (let k = 0; k <= n / 2; k++) power[k] += out[2 * k] * out[2 * k] + out[2 * k + 1] * out[2 * k + 1];
  }
  // A full-scale sine of amplitude 1 peaks at |X| = Σw / 2: scale so it reads 0 dB.
  const scale = segments > 0 ? 1 / (segments * (wSum / 2) ** 2) : 0;
  const highHz = Math.min(sampleRateHz / 2, 24_000);
  const binHz = sampleRateHz / n;
  const hz = new Float64Array(bands);
  const db = new Float64Array(bands);
  const ratio = Math.log(highHz / lowHz);
  for (let b = 0; b < bands; b++) {
    const f0 = lowHz * Math.exp((ratio * b) / bands);
    const f1 = lowHz * Math.exp((ratio * (b + 1)) / bands);
    hz[b] = Math.sqrt(f0 * f1);
    let k0 = Math.round(f0 / binHz);
    let k1 = Math.round(f1 / binHz);
    if (k1 <= k0) {
      k0 = Math.round(hz[b] / binHz);
      k1 = k0 + 1;
    }
    // Peak bin within the band: a hum line stays a line instead of being averaged away.
    let p = 0;
    for (let k = k0; k < k1 && k <= n / 2; k++) p = Math.max(p, power[k]);
    db[b] = 10 * Math.log10(p * scale + 1e-20);
  }
  return { hz, db };
}

/**
 * The flat spectrum as a candidate curve would make it. This multiplies by the
 * analog curve's gain |H(f)|, not the digital sections': for a magnitude view
 * that is exact, and the sections match it to ~0.002 dB anyway. `offsetDb` is
 * the loudness match applied in playback.
 */
export function throughCurve(flat: Spectrum, spec: CurveSpec, offsetDb: number): Spectrum {
  const r = analogResponse(analogModel(spec), flat.hz);
  const db = new Float64Array(flat.db.length);
  for (let i = 0; i < db.length; i++) db[i] = flat.db[i] + r.gainDb[i] + offsetDb;
  return { hz: flat.hz, db };
}
