import { mkdtemp, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import {
  BwfWriter,
  convolveDirect,
  openFileSource,
  readWavHeader,
  renderAccessCopy,
  TpdfDither,
} from "@/lib/audio";
import { jsDsp, nativeDsp, nativeDspProblem } from "@/lib/audio/dsp";
import type { DspEngine } from "@/lib/audio/dsp";
import { testRandom, testSignal } from "../support/wav-corpus";

// The two commands build the native engine before any test runs; a missing build is a failure here, not a
// silent fall-back to the slower engine.
const native = nativeDsp() as DspEngine;

describe("native render engine", () => {
  it("is built and loads", () => {
    expect(nativeDspProblem()).toBeNull();
    expect(native.name).toMatch(/^native \(fftw-3\./);
  });
});

describe("native and JavaScript engines compute the same thing", () => {
  const rand = testRandom(11);
  const samples = Float64Array.from({ length: 20_001 }, () => rand() * 1.2);
  // Exact halves, codes at the edges, beyond full scale, and values that are not numbers.
  const edges = Float64Array.from([
    0,
    0.5 / 32768,
    1.5 / 32768,
    -0.5 / 32768,
    -2.5 / 32768,
    1,
    -1,
    1 - 2 ** -15,
    7,
    -7,
    Infinity,
    -Infinity,
    NaN,
    0.49999999999999994 / 32768,
  ]);

  it.each([
    ["pcm", 16],
    ["pcm", 24],
    ["pcm", 32],
    ["float", 32],
    ["float", 64],
  ] as const)("decodes %s %i-bit bytes to the same samples", (format, bits) => {
    const bytes = Uint8Array.from({ length: 3 * 4 * 8 * 64 }, () => Math.floor((rand() + 0.5) * 256) & 0xff);
    if (format === "float") {
      // Keep the float cases to ordinary numbers (random bytes would make NaN payloads).
      const view = new DataView(bytes.buffer);
      for (let o = 0; o + bits / 8 <= bytes.length; o += bits / 8) {
        if (bits === 32) view.setFloat32(o, rand() * 3, true);
        else view.setFloat64(o, rand() * 3, true);
      }
    }
    const a = new Float64Array(bytes.length);
    const b = new Float64Array(bytes.length);
    const n = jsDsp.decode(bytes, { format, bitsPerSample: bits }, a);
    expect(native.decode(bytes, { format, bitsPerSample: bits }, b)).toBe(n);
    expect(Array.from(b.subarray(0, n))).toEqual(Array.from(a.subarray(0, n)));
  });

  it.each([16, 24, 32])(
    "encodes %i-bit PCM to the same bytes and clip count, with and without dither",
    (bits) => {
      for (const input of [samples, edges]) {
        for (const seed of [null, 1, 0xfeedbeef]) {
          for (const gain of [1, 0.37]) {
            const width = bits / 8;
            const a = new Uint8Array(input.length * width);
            const b = new Uint8Array(input.length * width);
            const da = seed === null ? null : new TpdfDither(seed).state;
            const db = seed === null ? null : new TpdfDither(seed).state;
            const clippedA = jsDsp.encodePcm(input, input.length, gain, bits, da, a);
            const clippedB = native.encodePcm(input, input.length, gain, bits, db, b);
            expect(clippedB).toBe(clippedA);
            expect(Buffer.from(b).equals(Buffer.from(a))).toBe(true);
            // Both leave the generator at the same place, so the next block goes on alike.
            expect(db?.[0]).toBe(da?.[0]);
          }
        }
      }
    },
  );

  it("rounds exact halves to even and counts what lies beyond the codes", () => {
    for (const engine of [jsDsp, native]) {
      const out = new Uint8Array(edges.length * 2);
      const clipped = engine.encodePcm(edges, edges.length, 1, 16, null, out);
      const codes = Array.from(new Int16Array(out.buffer));
      // 0.5 → 0, 1.5 → 2, −0.5 → −0, −2.5 → −2 (IEEE 754 round half to even); NaN writes 0.
      expect(codes.slice(0, 5)).toEqual([0, 0, 2, 0, -2]);
      expect(codes.slice(5, 12)).toEqual([32767, -32768, 32767, 32767, -32768, 32767, -32768]);
      expect(codes[12]).toBe(0);
      expect(codes[13]).toBe(0);
      // 1.0, 7, −7, +∞, −∞ clip; −1.0 is the most negative code exactly.
      expect(clipped).toBe(5);
    }
  });

  it("finds the same peak", () => {
    for (const engine of [jsDsp, native]) {
      expect(engine.peak(samples, samples.length)).toBe(Math.max(...Array.from(samples, Math.abs)));
      expect(engine.peak(Float64Array.from([0.1, NaN, -0.3, 0.2]), 4)).toBe(0.3);
      expect(engine.peak(samples, 0)).toBe(0);
    }
  });

  it.each([
    [1, 1],
    [1, 2],
    [300, 1],
    [300, 2],
    [1000, 2],
  ] as const)(
    "filters %i taps × %i channels as the direct convolution does, over uneven chunks",
    (tapCount, channels) => {
      const taps = Float64Array.from({ length: tapCount }, () => rand());
      const frames = 7000;
      const x = testSignal(frames, channels, tapCount + 3, 0.5);
      const interleaved = new Float64Array(frames * channels);
      for (let c = 0; c < channels; c++)
        for (let i = 0; i < frames; i++) interleaved[i * channels + c] = x[c][i];
      // Reference: the textbook sum y[n] = Σ h[k]·x[n − k], one channel at a time.
      const want = x.map((ch) => convolveDirect(ch, taps));
      let scale = 0;
      for (const w of want) for (const v of w) scale = Math.max(scale, Math.abs(v));
      for (const engine of [jsDsp, native]) {
        const f = engine.filter(taps, channels);
        const out = new Float64Array(frames * channels);
        const sizes = [1, 17, f.blockSize, f.blockSize + 3, 999, 4];
        for (let at = 0, i = 0; at < frames; i++) {
          const n = Math.min(sizes[i % sizes.length], frames - at);
          f.process(interleaved.subarray(at * channels), n, out.subarray(at * channels));
          at += n;
        }
        let worst = 0;
        for (let c = 0; c < channels; c++)
          for (let i = 0; i < frames; i++)
            worst = Math.max(worst, Math.abs(out[i * channels + c] - want[c][i]));
        // Float64 FFT round-off, relative to the signal's scale.
        expect(worst).toBeLessThan(1e-12 * scale * Math.max(1, Math.log2(tapCount)));
      }
    },
  );

  it("filters in place (output the same array as input)", () => {
    const taps = Float64Array.from([0.5, 0.25, -0.125]);
    const x = Float64Array.from([1, 0, 0, 0, 2, 0]);
    const f = native.filter(taps, 1);
    f.process(x, x.length, x);
    [0.5, 0.25, -0.125, 0, 1, 0.5].forEach((v, i) => expect(x[i]).toBeCloseTo(v, 14));
  });

  it("refuses arguments of the wrong kind with a message that names them", () => {
    const mod = native;
    expect(() => mod.encodePcm(new Float64Array(4), 4, 1, 20, null, new Uint8Array(16))).toThrow(
      /bits must be 16, 24 or 32/,
    );
    expect(() => mod.encodePcm(new Float64Array(4), 5, 1, 16, null, new Uint8Array(16))).toThrow(/count/);
    expect(() => mod.encodePcm(new Float64Array(4), 4, 1, 16, null, new Uint8Array(4))).toThrow(/too short/);
    expect(() =>
      mod.decode(new Uint8Array(6), { format: "pcm", bitsPerSample: 24 }, new Float64Array(1)),
    ).toThrow(/shorter/);
    expect(() => mod.filter(new Float64Array(0), 1)).toThrow(/taps/);
  });
});

describe("a render on either engine", () => {
  let dir: string;
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), "rillbook-dsp-"));
  });
  afterAll(async () => {
    await rm(dir, { recursive: true, force: true });
  });

  it("gives the same access copy to within one step, almost everywhere the very same bytes", async () => {
    const rand = testRandom(5);
    const taps = Float64Array.from(
      { length: 513 },
      (_, k) => (k === 100 ? 1 : 0) + 0.02 * rand() * Math.exp(-k / 80),
    );
    const input = join(dir, "in.wav");
    const w = await BwfWriter.create(input, {
      sampleRateHz: 48_000,
      channels: 2,
      encoding: { format: "pcm", bitsPerSample: 24 },
    });
    await w.write(testSignal(40_000, 2, 23, 0.4));
    await w.close();
    const outputs: Float64Array[] = [];
    for (const dsp of [jsDsp, native]) {
      const source = await openFileSource(input);
      const output = join(dir, `${dsp === jsDsp ? "js" : "native"}.wav`);
      const r = await renderAccessCopy({
        source,
        header: await readWavHeader(source),
        filter: { taps, delaySamples: 100 },
        outputPath: output,
        dsp,
      });
      await source.close();
      expect(r.engine).toBe(dsp.name);
      const bytes = await readFile(output);
      const header = await readWavHeader({
        size: bytes.length,
        read: (o, n) => Promise.resolve(bytes.subarray(o, o + n)),
      });
      const decoded = new Float64Array(header.frames * 2);
      jsDsp.decode(
        bytes.subarray(header.dataOffset, header.dataOffset + header.frames * header.blockAlign),
        { format: "pcm", bitsPerSample: 24 },
        decoded,
      );
      outputs.push(decoded);
    }
    let differing = 0;
    let worst = 0;
    for (let i = 0; i < outputs[0].length; i++) {
      const d = Math.abs(outputs[0][i] - outputs[1][i]) * 2 ** 23;
      if (d > 0) differing++;
      worst = Math.max(worst, d);
    }
    // The filters differ by float64 round-off (~1e-16), which moves a sample across a rounding
    // boundary only when it lies within that distance of one.
    expect(worst).toBeLessThanOrEqual(1);
    expect(differing / outputs[0].length).toBeLessThan(1e-4);
  });
});
