import { describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import { decodeFrames, encodeFrames, TpdfDither } from "@/lib/audio";
import type { SampleEncoding } from "@/lib/audio";
import { testRandom, testSignal } from "../support/wav-corpus";

const ENCODINGS: [string, SampleEncoding][] = [
  ["16", { format: "pcm", bitsPerSample: 16 }],
  ["24", { format: "pcm", bitsPerSample: 24 }],
  ["32", { format: "pcm", bitsPerSample: 32 }],
  ["32f", { format: "float", bitsPerSample: 32 }],
  ["64", { format: "float", bitsPerSample: 64 }],
];

function dataOf(wav: InstanceType<typeof WaveFile>): Uint8Array {
  return (wav.data as { samples: Uint8Array }).samples;
}

describe("sample codecs against wavefile", () => {
  it.each(ENCODINGS)("decodes %s-bit the way wavefile does", (code, enc) => {
    const frames = 300;
    const values = testSignal(frames, 2, 3, 1);
    values[0][0] = -1; // most negative code
    values[1][0] = 1; // clips to the most positive code
    const isFloat = enc.format === "float";
    const scale = 2 ** (enc.bitsPerSample - 1);
    const input = values.map((ch) =>
      Array.from(ch, (v) => (isFloat ? v : Math.max(-scale, Math.min(scale - 1, Math.round(v * scale))))),
    );
    const wav = new WaveFile();
    wav.fromScratch(2, 48_000, code, input);
    const decoded = decodeFrames(dataOf(wav), enc, 2);
    // Source: wavefile.getSamples (raw codes for PCM, floats for float).
    const ref = wav.getSamples(false) as unknown as Float64Array[];
    const k = isFloat ? 1 : scale;
    for (let c = 0; c < 2; c++) expect(Array.from(decoded[c], (v) => v * k)).toEqual(Array.from(ref[c]));
  });

  it.each(ENCODINGS)("encodes %s-bit (no dither) to the bytes wavefile writes", (code, enc) => {
    const values = testSignal(257, 2, 11, 0.99);
    const isFloat = enc.format === "float";
    const scale = 2 ** (enc.bitsPerSample - 1);
    const input = values.map((ch) => Array.from(ch, (v) => (isFloat ? v : Math.round(v * scale))));
    const wav = new WaveFile();
    wav.fromScratch(2, 48_000, code, input);
    // Source: wavefile's interleaved data bytes for the same values.
    expect(encodeFrames(values, enc).bytes).toEqual(dataOf(wav));
  });

  it.each(ENCODINGS)("round-trips %s-bit bytes exactly (decode then encode without dither)", (_code, enc) => {
    const rand = testRandom(5);
    const bytes = new Uint8Array((enc.bitsPerSample / 8) * 2 * 500);
    for (let i = 0; i < bytes.length; i++) bytes[i] = Math.floor((rand() + 0.5) * 256);
    if (enc.format === "float") {
      // Random bytes can be NaN, which has many encodings; use real floats instead.
      const v = new DataView(bytes.buffer);
      const step = enc.bitsPerSample / 8;
      for (let o = 0; o < bytes.length; o += step) {
        if (step === 4) v.setFloat32(o, rand() * 2.5, true);
        else v.setFloat64(o, rand() * 2.5, true);
      }
    }
    const decoded = decodeFrames(bytes, enc, 2);
    expect(encodeFrames(decoded, enc).bytes).toEqual(bytes);
  });
});

describe("TPDF dither", () => {
  it("keeps each dither value within ±1 LSB and the result within 1 LSB of the undithered rounding", () => {
    const d = new TpdfDither(42);
    let lo = 0;
    let hi = 0;
    for (let i = 0; i < 200_000; i++) {
      const v = d.next();
      lo = Math.min(lo, v);
      hi = Math.max(hi, v);
    }
    // Source: definition of TPDF dither of 2 LSB peak-to-peak (sum of two 1-LSB uniform variables).
    expect(lo).toBeGreaterThan(-1);
    expect(hi).toBeLessThan(1);
    expect(lo).toBeLessThan(-0.95);
    expect(hi).toBeGreaterThan(0.95);

    const enc: SampleEncoding = { format: "pcm", bitsPerSample: 16 };
    const x = testSignal(50_000, 1, 9, 0.5);
    const plain = decodeFrames(encodeFrames(x, enc).bytes, enc, 1)[0];
    const dithered = decodeFrames(encodeFrames(x, enc, { dither: new TpdfDither(1) }).bytes, enc, 1)[0];
    let worst = 0;
    for (let i = 0; i < x[0].length; i++) worst = Math.max(worst, Math.abs(dithered[i] - plain[i]) * 32768);
    expect(worst).toBeLessThanOrEqual(1);
    expect(worst).toBe(1); // it does move samples
  });

  it("gives an error of mean 0 and variance Δ²/4 whatever the signal (Lipshitz, Wannamaker & Vanderkooy 1992)", () => {
    const enc: SampleEncoding = { format: "pcm", bitsPerSample: 16 };
    // A DC level 0.3 LSB above a code: plain rounding would give a constant −0.3 LSB error.
    const n = 400_000;
    const level = (1000 + 0.3) / 32768;
    const x = [new Float64Array(n).fill(level)];
    const y = decodeFrames(encodeFrames(x, enc, { dither: new TpdfDither(7) }).bytes, enc, 1)[0];
    let sum = 0;
    let sum2 = 0;
    for (let i = 0; i < n; i++) {
      const e = (y[i] - level) * 32768;
      sum += e;
      sum2 += e * e;
    }
    const mean = sum / n;
    const variance = sum2 / n - mean * mean;
    // Standard errors: σ/√n ≈ 0.0008 for the mean; a few thousandths for the variance.
    expect(Math.abs(mean)).toBeLessThan(0.005);
    expect(Math.abs(variance - 0.25)).toBeLessThan(0.005);
  });

  it("reproduces from its seed", () => {
    const x = testSignal(1000, 2, 4, 0.5);
    const enc: SampleEncoding = { format: "pcm", bitsPerSample: 24 };
    const a = encodeFrames(x, enc, { dither: new TpdfDither(3) }).bytes;
    const b = encodeFrames(x, enc, { dither: new TpdfDither(3) }).bytes;
    const c = encodeFrames(x, enc, { dither: new TpdfDither(4) }).bytes;
    expect(a).toEqual(b);
    expect(a).not.toEqual(c);
  });
});

describe("clipping", () => {
  it("clamps to the extreme codes and counts each clipped sample", () => {
    const x = [Float64Array.from([0.5, 1.0, 1.5, -1.0, -1.2, 0.99999])];
    const enc: SampleEncoding = { format: "pcm", bitsPerSample: 16 };
    const { bytes, clipped } = encodeFrames(x, enc);
    // 1.0 → 32768 > 32767, 1.5, −1.2 clip; −1.0 is the most negative code exactly; 0.99999 → 32767.67 rounds to 32768 and clips.
    expect(clipped).toBe(4);
    const codes = Array.from(new Int16Array(bytes.buffer));
    expect(codes).toEqual([16384, 32767, 32767, -32768, -32768, 32767]);
  });

  it("counts float samples beyond full scale but keeps them", () => {
    const x = [Float64Array.from([0.5, 1.25, -2])];
    const { bytes, clipped } = encodeFrames(x, { format: "float", bitsPerSample: 32 });
    expect(clipped).toBe(2);
    expect(Array.from(new Float32Array(bytes.buffer))).toEqual([0.5, 1.25, -2]);
  });
});
