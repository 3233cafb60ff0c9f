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

export type SampleFormat = "pcm" | "float";

export interface SampleEncoding {
  format: SampleFormat;
  /** 16, 24 or 32 for PCM; 32 or 64 for float. */
  bitsPerSample: number;
}

/** mulberry32: small, fast, good enough statistical quality for dither; deterministic from its seed. */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = Math.imul(a ^ (a >>> 15), a | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** TPDF dither in LSB, on the open interval (−1, 1). */
export class TpdfDither {
  // mulberry32's state, stepped inline (the same sequence as seededRandom(seed)):
  // a closure call per draw made dither the slowest step of a render.
  private state: number;
  constructor(seed = 0x5eed) {
    this.state = seed >>> 0;
  }
  private draw(): number {
    this.state = (this.state + 0x6d2b79f5) >>> 0;
    const a = this.state;
    let t = Math.imul(a ^ (a >>> 15), a | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  }
  next(): number {
    return this.draw() - this.draw();
  }
  /** Fills `out[0…n)` with dither values, the same as n calls of next(). */
  fill(out: Float64Array, n = out.length): void {
    let s = this.state;
    for (let i = 0; i < n; i++) {
      s = (s + 0x6d2b79f5) >>> 0;
      let t = Math.imul(s ^ (s >>> 15), s | 1);
      t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
      const r1 = ((t ^ (t >>> 14)) >>> 0) / 4294967296;
      s = (s + 0x6d2b79f5) >>> 0;
      t = Math.imul(s ^ (s >>> 15), s | 1);
      t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
      out[i] = r1 - ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    }
    this.state = s;
  }
}

function checkEncoding(enc: SampleEncoding): void {
  const ok = enc.format === "pcm" ? [16, 24, 32].includes(enc.bitsPerSample) : [32, 64].includes(enc.bitsPerSample);
  if (!ok) throw new RangeError(`No codec for ${enc.bitsPerSample}-bit ${enc.format}.`);
}

/**
 * Decode `frames` interleaved frames from `bytes` into per-channel arrays
 * (`out` is reused when given and long enough).
 */
export function decodeFrames(bytes: Uint8Array, enc: SampleEncoding, channels: number, out?: Float64Array[]): Float64Array[] {
  checkEncoding(enc);
  const bytesPer = enc.bitsPerSample / 8;
  const frames = Math.floor(bytes.length / (bytesPer * channels));
  const result: Float64Array[] = [];
  for (let c = 0; c < channels; c++) {
    const reuse = out?.[c];
    result.push(reuse && reuse.length >= frames ? reuse.subarray(0, frames) : new Float64Array(frames));
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const stride = bytesPer * channels;
  for (let c = 0; c < channels; c++) {
    const dst = result[c];
    let o = c * bytesPer;
    if (enc.format === "pcm") {
      if (bytesPer === 2) {
        for (let i = 0; i < frames; i++, o += stride) dst[i] = view.getInt16(o, true) / 32768;
      } else if (bytesPer === 3) {
        for (let i = 0; i < frames; i++, o += stride) {
          // Shift the top byte into the sign position, then back: sign-extends the 24-bit value.
          const v = ((bytes[o] | (bytes[o + 1] << 8) | (bytes[o + 2] << 16)) << 8) >> 8;
          dst[i] = v / 8388608;
        }
      } else {
        for (let i = 0; i < frames; i++, o += stride) dst[i] = view.getInt32(o, true) / 2147483648;
      }
    } else if (bytesPer === 4) {
      for (let i = 0; i < frames; i++, o += stride) dst[i] = view.getFloat32(o, true);
    } else {
      for (let i = 0; i < frames; i++, o += stride) dst[i] = view.getFloat64(o, true);
    }
  }
  return result;
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

/** Interleave and encode the first `frames` samples of each channel. */
export function encodeFrames(channels: Float64Array[], enc: SampleEncoding, options: EncodeOptions = {}, frames = channels[0]?.length ?? 0): EncodeResult {
  checkEncoding(enc);
  const n = channels.length;
  const bytesPer = enc.bitsPerSample / 8;
  const stride = bytesPer * n;
  const bytes = new Uint8Array(frames * stride);
  const view = new DataView(bytes.buffer);
  const gain = options.gain ?? 1;
  const dither = enc.format === "pcm" ? (options.dither ?? null) : null;
  let clipped = 0;
  if (enc.format === "float") {
    for (let c = 0; c < n; c++) {
      const src = channels[c];
      let o = c * bytesPer;
      for (let i = 0; i < frames; i++, o += stride) {
        const v = src[i] * gain;
        if (v > 1 || v < -1) clipped++;
        if (bytesPer === 4) view.setFloat32(o, v, true);
        else view.setFloat64(o, v, true);
      }
    }
    return { bytes, clipped };
  }
  const scale = 2 ** (enc.bitsPerSample - 1);
  const max = scale - 1;
  const min = -scale;
  const k = gain * scale;
  // One dither value per sample in file order (frame-major), drawn in a batch.
  const noise = dither ? new Float64Array(frames * n) : null;
  if (dither && noise) dither.fill(noise);
  // Frame-major so one dither stream serves all channels in file order (independent per sample).
  for (let i = 0, o = 0, d = 0; i < frames; i++) {
    for (let c = 0; c < n; c++, o += bytesPer, d++) {
      let v = channels[c][i] * k;
      if (noise) v += noise[d];
      let q = Math.round(v);
      if (q > max) {
        q = max;
        clipped++;
      } else if (q < min) {
        q = min;
        clipped++;
      }
      if (bytesPer === 2) {
        bytes[o] = q & 0xff;
        bytes[o + 1] = (q >> 8) & 0xff;
      } else if (bytesPer === 3) {
        bytes[o] = q & 0xff;
        bytes[o + 1] = (q >> 8) & 0xff;
        bytes[o + 2] = (q >> 16) & 0xff;
      } else {
        view.setInt32(o, q, true);
      }
    }
  }
  return { bytes, clipped };
}

/** Largest positive sample value the encoding stores (1 − 2^−(bits−1) for PCM, 1 for float). */
export function fullScalePositive(enc: SampleEncoding): number {
  return enc.format === "pcm" ? 1 - 2 ** -(enc.bitsPerSample - 1) : 1;
}
