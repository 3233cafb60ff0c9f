import { describe, expect, it } from "vitest";
import { convolveDirect, PairConvolver, StreamingConvolver } from "@/lib/audio";
import { testRandom } from "../support/wav-corpus";

describe("streaming convolver", () => {
  it.each([[1], [7], [300], [1000]])(
    "chunked output equals one-shot direct convolution (%i taps)",
    (tapCount) => {
      const rand = testRandom(tapCount);
      const taps = Float64Array.from({ length: tapCount }, rand);
      const signal = Float64Array.from({ length: 5000 }, rand);
      const direct = convolveDirect(signal, taps);
      const conv = new StreamingConvolver(taps);
      const out: number[] = [];
      let pos = 0;
      const sizes = [1, 2, 3, 17, 64, conv.blockSize, conv.blockSize + 5, 999, 4];
      for (let i = 0; pos < signal.length; i++) {
        const n = Math.min(sizes[i % sizes.length], signal.length - pos);
        const chunk = conv.process(signal.subarray(pos, pos + n));
        expect(chunk.length).toBe(n);
        out.push(...chunk);
        pos += n;
      }
      out.push(...conv.flush());
      expect(out.length).toBe(direct.length);
      let scale = 0;
      for (const v of direct) scale = Math.max(scale, Math.abs(v));
      for (let i = 0; i < direct.length; i++) {
        // Float64 FFT round-off grows like log2(N)·ε relative to the signal scale.
        expect(Math.abs(out[i] - direct[i])).toBeLessThan(1e-12 * scale * Math.max(1, tapCount));
      }
    },
  );

  it("starts over after reset", () => {
    const conv = new StreamingConvolver([0.5, 0.25]);
    conv.process([1, 1, 1]);
    conv.reset();
    const out = conv.process([1, 0, 0]);
    [0.5, 0.25, 0].forEach((v, i) => expect(out[i]).toBeCloseTo(v, 12));
  });
});

describe("PairConvolver", () => {
  it("gives each channel exactly what its own direct convolution gives, over uneven chunks", () => {
    const taps = Float64Array.from({ length: 301 }, (_, i) => Math.sin(i * 0.37) * Math.exp(-i / 90));
    const a = Float64Array.from({ length: 5000 }, (_, i) => Math.sin(i * 0.05) + 0.3 * Math.cos(i * 1.3));
    const b = Float64Array.from({ length: 5000 }, (_, i) => (i % 97) / 97 - 0.5);
    const pair = new PairConvolver(taps);
    const outA: number[] = [];
    const outB: number[] = [];
    for (const size of [1, 17, 999, 2048, 1935]) {
      const start = outA.length;
      const [ya, yb] = pair.process(a.subarray(start, start + size), b.subarray(start, start + size));
      outA.push(...ya);
      outB.push(...yb);
    }
    // Reference: the textbook sum, one channel at a time.
    const refA = convolveDirect(a, taps);
    const refB = convolveDirect(b, taps);
    let worst = 0;
    for (let i = 0; i < 5000; i++)
      worst = Math.max(worst, Math.abs(outA[i] - refA[i]), Math.abs(outB[i] - refB[i]));
    expect(worst).toBeLessThan(1e-10);
  });
});
