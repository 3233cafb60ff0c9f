/**
 * Streaming FFT convolution by overlap-save (e.g. Oppenheim & Schafer,
 * "Discrete-Time Signal Processing", §8.7.3), float64, for renders that must
 * run through files of any length with bounded memory.
 *
 * Each call takes any number of samples and returns the same number of output
 * samples: y[n] = Σ h[k]·x[n − k], with the input before the first sample
 * taken as zero and the last (taps − 1) inputs carried across calls. An FFT of
 * size F computes F − taps + 1 valid outputs at a time (the first taps − 1
 * points of the circular convolution are wrapped and thrown away), so chunks of
 * `blockSize` samples are the efficient size; any other size is correct too.
 */
import { fftFor, nextPowerOfTwo, realSpectrum } from "../curves/fft";

/**
 * The overlap-save sizes for a filter of `tapCount` taps: the FFT (default about 4·taps,
 * about 1.3·log2(F) operations per output sample against 2·log2 for F = 2·taps) and the
 * new samples each FFT handles. Every convolver here, and the native engine, uses these.
 */
export function convolverSizes(
  tapCount: number,
  fftSize = Math.max(256, nextPowerOfTwo(4 * tapCount)),
): { fftSize: number; blockSize: number } {
  if (tapCount < 1) throw new RangeError("A convolver needs taps: this filter has none.");
  if (fftSize < tapCount || (fftSize & (fftSize - 1)) !== 0)
    throw new RangeError("fftSize must be a power of two at least as long as the filter.");
  return { fftSize, blockSize: fftSize - tapCount + 1 };
}

/** w ← w·s, bin by bin, for interleaved complex spectra of `bins` bins. */
function multiplyInPlace(w: Float64Array, s: Float64Array, bins: number): void {
  for (let k = 0; k < bins; k++) {
    const re = w[2 * k] * s[2 * k] - w[2 * k + 1] * s[2 * k + 1];
    const im = w[2 * k] * s[2 * k + 1] + w[2 * k + 1] * s[2 * k];
    w[2 * k] = re;
    w[2 * k + 1] = im;
  }
}

export class StreamingConvolver {
  readonly tapCount: number;
  readonly fftSize: number;
  /** New samples handled per FFT; feed chunks of this size for best speed. */
  readonly blockSize: number;
  private readonly spectrum: Float64Array;
  private readonly history: Float64Array;
  private readonly frame: Float64Array;
  private readonly work: Float64Array;
  private readonly result: Float64Array;

  constructor(taps: ArrayLike<number>, options: { fftSize?: number } = {}) {
    this.tapCount = taps.length;
    ({ fftSize: this.fftSize, blockSize: this.blockSize } = convolverSizes(taps.length, options.fftSize));
    this.spectrum = realSpectrum(taps, this.fftSize);
    this.history = new Float64Array(taps.length - 1);
    this.frame = new Float64Array(this.fftSize);
    this.work = new Float64Array(2 * this.fftSize);
    this.result = new Float64Array(2 * this.fftSize);
  }

  /** Filter the next chunk; returns exactly input.length samples. */
  process(input: ArrayLike<number>): Float64Array {
    const out = new Float64Array(input.length);
    this.processInto(input, input.length, out);
    return out;
  }

  /** Filter the next `frames` samples of `input` into `output` (the render's interface, lib/audio/dsp.ts). */
  processInto(input: ArrayLike<number>, frames: number, output: Float64Array): void {
    let done = 0;
    while (done < frames) {
      const m = Math.min(this.blockSize, frames - done);
      this.processPiece(input, done, m, output);
      done += m;
    }
  }

  /** The remaining (taps − 1) samples of ring-out, as if zeros followed the input. */
  flush(): Float64Array {
    return this.process(new Float64Array(this.tapCount - 1));
  }

  /** Forget the carried input (start of a new signal). */
  reset(): void {
    this.history.fill(0);
  }

  private processPiece(input: ArrayLike<number>, start: number, m: number, out: Float64Array): void {
    const h = this.history.length;
    const f = fftFor(this.fftSize);
    const frame = this.frame;
    frame.fill(0);
    frame.set(this.history, 0);
    for (let i = 0; i < m; i++) frame[h + i] = input[start + i];
    f.realTransform(this.work, frame);
    f.completeSpectrum(this.work);
    multiplyInPlace(this.work, this.spectrum, this.fftSize);
    f.inverseTransform(this.result, this.work);
    for (let i = 0; i < m; i++) out[start + i] = this.result[2 * (h + i)];
    // Carry the last h inputs of [history | piece].
    if (h > 0) {
      if (m >= h) {
        for (let i = 0; i < h; i++) this.history[i] = input[start + m - h + i];
      } else {
        this.history.copyWithin(0, m);
        for (let i = 0; i < m; i++) this.history[h - m + i] = input[start + i];
      }
    }
  }
}

/** Direct-form convolution (full length n + taps − 1); reference for tests and short signals. */
export function convolveDirect(signal: ArrayLike<number>, taps: ArrayLike<number>): Float64Array {
  const out = new Float64Array(signal.length + taps.length - 1);
  for (let i = 0; i < signal.length; i++) {
    const x = signal[i];
    if (x === 0) continue;
    for (let k = 0; k < taps.length; k++) out[i + k] += x * taps[k];
  }
  return out;
}

/**
 * Two channels through the same real filter with one complex FFT per block: the left
 * channel rides in the real part and the right in the imaginary part. Because the
 * filter is real, the inverse transform gives left⊛h in its real part and right⊛h in its
 * imaginary part (linearity of the DFT) — half the transforms of two separate
 * convolvers. Same streaming contract as StreamingConvolver.
 */
export class PairConvolver {
  readonly tapCount: number;
  readonly fftSize: number;
  readonly blockSize: number;
  private readonly spectrum: Float64Array;
  /** The last taps − 1 frames, interleaved (left, right, left, …). */
  private readonly history: Float64Array;
  private readonly frame: Float64Array;
  private readonly work: Float64Array;
  private readonly result: Float64Array;

  constructor(taps: ArrayLike<number>, options: { fftSize?: number } = {}) {
    this.tapCount = taps.length;
    ({ fftSize: this.fftSize, blockSize: this.blockSize } = convolverSizes(taps.length, options.fftSize));
    this.spectrum = realSpectrum(taps, this.fftSize);
    this.history = new Float64Array(2 * (taps.length - 1));
    this.frame = new Float64Array(2 * this.fftSize);
    this.work = new Float64Array(2 * this.fftSize);
    this.result = new Float64Array(2 * this.fftSize);
  }

  /** Filters the next chunk of both channels (equal lengths); returns the two outputs. */
  process(a: ArrayLike<number>, b: ArrayLike<number>): [Float64Array, Float64Array] {
    if (a.length !== b.length) throw new RangeError("Both channels must bring the same number of samples.");
    const n = a.length;
    const frames = new Float64Array(2 * n);
    for (let i = 0; i < n; i++) {
      frames[2 * i] = a[i];
      frames[2 * i + 1] = b[i];
    }
    this.processInterleaved(frames, n, frames);
    const outA = new Float64Array(n);
    const outB = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      outA[i] = frames[2 * i];
      outB[i] = frames[2 * i + 1];
    }
    return [outA, outB];
  }

  /**
   * Filters the next `frames` stereo frames, interleaved as in a WAVE file, into
   * `output` (which may be `input`). An interleaved frame is already the complex
   * sample this convolver transforms.
   */
  processInterleaved(input: Float64Array, frames: number, output: Float64Array): void {
    let done = 0;
    while (done < frames) {
      const m = Math.min(this.blockSize, frames - done);
      this.processPiece(input.subarray(2 * done, 2 * (done + m)), output.subarray(2 * done, 2 * (done + m)));
      done += m;
    }
  }

  private processPiece(piece: Float64Array, out: Float64Array): void {
    const h2 = this.history.length;
    const m2 = piece.length;
    const f = fftFor(this.fftSize);
    const frame = this.frame;
    frame.set(this.history, 0);
    frame.set(piece, h2);
    frame.fill(0, h2 + m2);
    // The last taps − 1 frames of [history | piece] are the next piece's history.
    this.history.set(frame.subarray(m2, m2 + h2));
    f.transform(this.work, frame);
    multiplyInPlace(this.work, this.spectrum, this.fftSize);
    f.inverseTransform(this.result, this.work);
    out.set(this.result.subarray(h2, h2 + m2));
  }
}
