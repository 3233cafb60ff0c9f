/**
 * Sample codecs between interleaved little-endian WAVE data and one
 * Float64Array per channel, full scale = 1.0.
 *
 * Integer PCM is two's complement (16/24/32-bit; 24-bit as three bytes, low
 * byte first) and scaled by 2^(bits−1), so −1.0 is the most negative code and
 * the most positive code is 1 − 2^−(bits−1): the usual convention, which keeps
 * every code exactly representable and round-trips bit for bit.
 *
 * Encoding to integers adds TPDF dither: the sum of two independent uniform
 * variables of 1 LSB width, triangular on (−1, 1) LSB. It is the dither that
 * makes the first and second moments of the quantisation error independent of
 * the signal (Lipshitz, Wannamaker & Vanderkooy, "Quantization and Dither: A
 * Theoretical Survey", JAES 40(5), 1992): the error then has mean 0 and
 * variance Δ²/4 (Δ²/12 rounding + Δ²/6 dither), whatever the signal. The
 * generator is seeded so a render is reproducible byte for byte.
 */
import { MULBERRY_STEP, mulberry32 } from "../seeded-random";

export type SampleFormat = "pcm" | "float";

export interface SampleEncoding {
  format: SampleFormat;
  /** 16, 24 or 32 for PCM; 32 or 64 for float. */
  bitsPerSample: number;
}

/** TPDF dither in LSB, on the open interval (−1, 1). */
export class TpdfDither {
  /**
   * mulberry32's state (the same sequence as seededRandom(seed), lib/seeded-random.ts), in a typed array so
   * the native encoder (lib/audio/dsp.ts) steps the very same generator.
   */
  readonly state: Uint32Array;
  constructor(seed = 0x5eed) {
    this.state = Uint32Array.of(seed >>> 0);
  }
  private draw(): number {
    return mulberry32((this.state[0] = (this.state[0] + MULBERRY_STEP) >>> 0));
  }
  next(): number {
    return this.draw() - this.draw();
  }
}

function checkEncoding(enc: SampleEncoding): void {
  const ok =
    enc.format === "pcm" ? [16, 24, 32].includes(enc.bitsPerSample) : [32, 64].includes(enc.bitsPerSample);
  if (!ok) throw new RangeError(`No codec for ${enc.bitsPerSample}-bit ${enc.format}.`);
}

/**
 * Decode every whole sample in `bytes` into `out` (interleaved, as in the file);
 * returns how many samples were written. `out` must hold them.
 */
export function decodeInterleaved(bytes: Uint8Array, enc: SampleEncoding, out: Float64Array): number {
  checkEncoding(enc);
  const width = enc.bitsPerSample / 8;
  const count = Math.floor(bytes.length / width);
  if (out.length < count) throw new RangeError("The output array is shorter than the samples to decode.");
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (enc.format === "float") {
    if (width === 4) for (let i = 0; i < count; i++) out[i] = view.getFloat32(4 * i, true);
    else for (let i = 0; i < count; i++) out[i] = view.getFloat64(8 * i, true);
  } else if (width === 2) {
    for (let i = 0; i < count; i++) out[i] = view.getInt16(2 * i, true) / 32768;
  } else if (width === 3) {
    for (let i = 0, o = 0; i < count; i++, o += 3) {
      // Shift the top byte into the sign position, then back: sign-extends the 24-bit value.
      out[i] = (((bytes[o] | (bytes[o + 1] << 8) | (bytes[o + 2] << 16)) << 8) >> 8) / 8388608;
    }
  } else {
    for (let i = 0; i < count; i++) out[i] = view.getInt32(4 * i, true) / 2147483648;
  }
  return count;
}

/**
 * Decode `frames` interleaved frames from `bytes` into per-channel arrays
 * (`out` is reused when given and long enough).
 */
export function decodeFrames(
  bytes: Uint8Array,
  enc: SampleEncoding,
  channels: number,
  out?: Float64Array[],
): Float64Array[] {
  checkEncoding(enc);
  const frames = Math.floor(bytes.length / ((enc.bitsPerSample / 8) * channels));
  const samples = new Float64Array(frames * channels);
  decodeInterleaved(bytes.subarray(0, frames * channels * (enc.bitsPerSample / 8)), enc, samples);
  const result: Float64Array[] = [];
  for (let c = 0; c < channels; c++) {
    const reuse = out?.[c];
    const dst = reuse && reuse.length >= frames ? reuse.subarray(0, frames) : new Float64Array(frames);
    for (let i = 0, o = c; i < frames; i++, o += channels) dst[i] = samples[o];
    result.push(dst);
  }
  return result;
}

/** 1.5·2^52: (v + ROUNDER) − ROUNDER rounds v to the nearest integer, halves to even (|v| < 2^51). */
const ROUNDER = 6755399441055744;

/**
 * Integer PCM from interleaved samples: out ← round(sample·gain·2^(bits−1) + dither),
 * clamped to the codes, little endian. `dither` is a TpdfDither's state (one draw pair
 * per sample, in order) or null for plain rounding. Returns how many samples clipped.
 * Rounding is to nearest with halves to even (IEEE 754's own rounding, by adding and
 * taking away 1.5·2^52), the same sums the native encoder does, so both write the same bytes.
 */
export function encodeInterleavedPcm(
  samples: Float64Array | Float32Array,
  count: number,
  gain: number,
  bitsPerSample: number,
  dither: Uint32Array | null,
  out: Uint8Array,
): number {
  checkEncoding({ format: "pcm", bitsPerSample });
  const width = bitsPerSample / 8;
  if (out.length < count * width) throw new RangeError("The output bytes are too short.");
  const scale = 2 ** (bitsPerSample - 1);
  const max = scale - 1;
  const min = -scale;
  const k = gain * scale;
  let clipped = 0;
  let s = dither ? dither[0] : 0;
  for (let i = 0, o = 0; i < count; i++, o += width) {
    let v = samples[i] * k;
    if (dither) {
      const r1 = mulberry32((s = (s + MULBERRY_STEP) >>> 0));
      v += r1 - mulberry32((s = (s + MULBERRY_STEP) >>> 0));
    }
    let q = v + ROUNDER - ROUNDER;
    if (q > max) {
      q = max;
      clipped++;
    } else if (q < min) {
      q = min;
      clipped++;
    }
    out[o] = q & 0xff;
    out[o + 1] = (q >> 8) & 0xff;
    if (width > 2) out[o + 2] = (q >> 16) & 0xff;
    if (width > 3) out[o + 3] = (q >> 24) & 0xff;
  }
  if (dither) dither[0] = s;
  return clipped;
}

export interface EncodeOptions {
  /** TPDF dither for integer output; null or absent = plain rounding. */
  dither?: TpdfDither | null;
  /** Gain applied before quantising (linear). */
  gain?: number;
}

export interface EncodeResult {
  bytes: Uint8Array;
  /**
   * Samples beyond full scale. Integer output clamps them to the extreme codes;
   * float output keeps them (a float file can hold them) but they are counted
   * because any later conversion to integers would clip them.
   */
  clipped: number;
}

/** Encode interleaved float output (32 or 64-bit IEEE), counting samples beyond full scale. */
export function encodeInterleavedFloat(
  samples: Float64Array | Float32Array,
  count: number,
  gain: number,
  bitsPerSample: number,
): EncodeResult {
  const width = bitsPerSample / 8;
  const bytes = new Uint8Array(count * width);
  const view = new DataView(bytes.buffer);
  let clipped = 0;
  for (let i = 0; i < count; i++) {
    const v = samples[i] * gain;
    if (v > 1 || v < -1) clipped++;
    if (width === 4) view.setFloat32(4 * i, v, true);
    else view.setFloat64(8 * i, v, true);
  }
  return { bytes, clipped };
}

/** The first `frames` samples of each channel, interleaved as in a WAVE file. */
export function interleave(channels: Float64Array[], frames = channels[0]?.length ?? 0): Float64Array {
  const n = channels.length;
  const samples = new Float64Array(frames * n);
  for (let c = 0; c < n; c++) {
    const src = channels[c];
    for (let i = 0, o = c; i < frames; i++, o += n) samples[o] = src[i];
  }
  return samples;
}

/** Interleave and encode the first `frames` samples of each channel. */
export function encodeFrames(
  channels: Float64Array[],
  enc: SampleEncoding,
  options: EncodeOptions = {},
  frames = channels[0]?.length ?? 0,
): EncodeResult {
  checkEncoding(enc);
  const samples = interleave(channels, frames);
  const gain = options.gain ?? 1;
  if (enc.format === "float") return encodeInterleavedFloat(samples, samples.length, gain, enc.bitsPerSample);
  // One dither value per sample in file order (frame-major), so one stream serves all channels.
  const bytes = new Uint8Array(samples.length * (enc.bitsPerSample / 8));
  const clipped = encodeInterleavedPcm(
    samples,
    samples.length,
    gain,
    enc.bitsPerSample,
    options.dither?.state ?? null,
    bytes,
  );
  return { bytes, clipped };
}

/** Largest positive sample value the encoding stores (1 − 2^−(bits−1) for PCM, 1 for float). */
export function fullScalePositive(enc: SampleEncoding): number {
  return enc.format === "pcm" ? 1 - 2 ** -(enc.bitsPerSample - 1) : 1;
}
