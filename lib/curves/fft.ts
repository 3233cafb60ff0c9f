/**
 * Thin wrapper over fft.js (radix-4, float64, runs in the browser too).
 * Spectra are interleaved [re0, im0, re1, im1, …] of length 2·size; the forward
 * transform uses the e^{−j2πkn/N} convention and the inverse divides by N.
 */
import FFT from "fft.js";

const cache = new Map<number, FFT>();

export function fftFor(size: number): FFT {
  let f = cache.get(size);
  if (!f) {
    f = new FFT(size);
    cache.set(size, f);
  }
  return f;
}

export function nextPowerOfTwo(n: number): number {
  let p = 2;
  while (p < n) p *= 2;
  return p;
}

/** Full complex spectrum of a real signal zero-padded (or cut) to `size` (a power of two). */
export function realSpectrum(signal: ArrayLike<number>, size: number): Float64Array {
  const f = fftFor(size);
  const input = new Float64Array(size);
  const n = Math.min(size, signal.length);
  for (let i = 0; i < n; i++) input[i] = signal[i];
  const out = new Float64Array(2 * size);
  f.realTransform(out, input);
  f.completeSpectrum(out);
  return out;
}

/** Real part of the inverse transform of an interleaved spectrum. */
export function inverseToReal(spectrum: Float64Array, size: number): Float64Array {
  const f = fftFor(size);
  const out = new Float64Array(2 * size);
  f.inverseTransform(out, spectrum);
  const real = new Float64Array(size);
  for (let i = 0; i < size; i++) real[i] = out[2 * i];
  return real;
}
