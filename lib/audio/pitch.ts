/**
 * The pitch reference: the speed a disc was cut at, from a sound of known pitch in its flat
 * transfer (a tuning note such as A = 440 Hz, or mains hum at 50 or 60 Hz picked up when it
 * was recorded). A disc cut at 80 rpm and transferred at 78 plays slow, so everything on it,
 * the reference too, sounds at 78/80 of its pitch: a 440 Hz A is found at 429 Hz. The cut
 * speed is therefore transfer speed × reference ÷ found (78 × 440/429 = 80).
 *
 * The peak is looked for in the spectrum of a window of the transfer (mixed to mono, mean
 * removed, Hann-windowed, zero-padded FFT), within the speeds a disc may plausibly have been
 * cut at (reference × 0.85 … 1.18 by default: 78 rpm ± about 15 %), and placed between bins
 * by a parabola through the log magnitudes of the highest bin and its neighbours. Its
 * confidence is its prominence: how far the peak stands above the median level of the band
 * searched, the peak's own main lobe left out.
 */
import { fftFor, nextPowerOfTwo } from "../curves/fft";

export interface PitchEstimate {
  /** The frequency of the peak found, Hz. */
  peakHz: number;
  /** Its level over the median of the band searched, dB (the confidence). */
  prominenceDb: number;
  /** "clear" ≥ 20 dB, "fair" ≥ 10 dB, else "weak". */
  confidence: "clear" | "fair" | "weak";
  /** found ÷ reference: below 1 the transfer plays slow (the disc was cut faster). */
  ratio: number;
  /** The band searched, Hz. */
  bandHz: [number, number];
  /** Spacing of the spectrum's bins, Hz. */
  binHz: number;
}

export class PitchError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "PitchError";
  }
}

/** Largest transform: 2^22 points (about 44 s at 96 kHz). */
export const MAX_PITCH_FFT = 1 << 22;

/**
 * Finds the spectrum peak near `referenceHz` in `samples` (one channel at `sampleRateHz`).
 * `search` is the ratio range around the reference looked in (default 0.85–1.18).
 */
export function estimatePitch(
  samples: ArrayLike<number>,
  sampleRateHz: number,
  referenceHz: number,
  search: [number, number] = [0.85, 1.18],
): PitchEstimate {
  const n = samples.length;
  if (!(referenceHz > 0) || referenceHz * search[1] >= sampleRateHz / 2)
    throw new PitchError(`A reference of ${referenceHz} Hz cannot be found at ${sampleRateHz} Hz.`);
  // At least 8 cycles of the lowest frequency searched, so the peak is a peak.
  const minSamples = Math.ceil((8 * sampleRateHz) / (referenceHz * search[0]));
  if (n < minSamples)
    throw new PitchError(
      `The window is too short for ${referenceHz} Hz: take at least ${(minSamples / sampleRateHz).toFixed(2)} s.`,
    );
  const size = Math.min(MAX_PITCH_FFT, Math.max(nextPowerOfTwo(n), nextPowerOfTwo(4 * n)));
  if (size < n)
    throw new PitchError(
      `The window is too long: at most ${Math.floor(MAX_PITCH_FFT / sampleRateHz)} s at this rate.`,
    );
  let mean = 0;
  for (let i = 0; i < n; i++) mean += samples[i];
  mean /= n;
  const input = new Float64Array(size);
  for (let i = 0; i < n; i++)
    input[i] = (samples[i] - mean) * (0.5 - 0.5 * Math.cos((2 * Math.PI * i) / (n - 1)));
  const out = new Float64Array(2 * size);
  fftFor(size).realTransform(out, input);
  const binHz = sampleRateHz / size;
  const k0 = Math.max(1, Math.ceil((referenceHz * search[0]) / binHz));
  const k1 = Math.min(size / 2 - 1, Math.floor((referenceHz * search[1]) / binHz));
  const level = (k: number) => 10 * Math.log10(out[2 * k] ** 2 + out[2 * k + 1] ** 2 + 1e-300);
  let best = k0;
  let bestLevel = -Infinity;
  const levels: number[] = [];
  for (let k = k0; k <= k1; k++) {
    const l = level(k);
    levels.push(l);
    if (l > bestLevel) {
      bestLevel = l;
      best = k;
    }
  }
  if (!Number.isFinite(bestLevel) || bestLevel <= -2990)
    throw new PitchError("The window is silent: there is nothing to measure.");
  // Parabola through the log magnitudes (dB/2 is log power/2 = log magnitude, the same shape).
  const [l, c, r] = [level(best - 1), bestLevel, level(best + 1)];
  const denom = l - 2 * c + r;
  const offset = denom < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (l - r)) / denom)) : 0;
  const peakHz = (best + offset) * binHz;
  // The Hann main lobe spans ±2 bins of the unpadded window: ±2·size/n bins here.
  const lobe = Math.ceil((2 * size) / n) + 1;
  const rest = levels.filter((_, i) => Math.abs(k0 + i - best) > lobe).sort((a, b) => a - b);
  const floor = rest.length ? rest[Math.floor(rest.length / 2)] : bestLevel;
  const prominenceDb = bestLevel - floor;
  return {
    peakHz,
    prominenceDb,
    confidence: prominenceDb >= 20 ? "clear" : prominenceDb >= 10 ? "fair" : "weak",
    ratio: peakHz / referenceHz,
    bandHz: [referenceHz * search[0], referenceHz * search[1]],
    binHz,
  };
}

/**
 * The cut speed a found peak implies: transfer speed × reference ÷ found, to 0.01 rpm (as the
 * curve choice keeps it). A 440 Hz A found at 429 Hz on a 78 rpm transfer: 78 × 440/429 = 80.
 */
export function proposedCutSpeed(transferSpeedRpm: number, referenceHz: number, foundHz: number): number {
  return Math.round(((transferSpeedRpm * referenceHz) / foundHz) * 100) / 100;
}
