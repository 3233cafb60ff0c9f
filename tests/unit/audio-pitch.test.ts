import { describe, expect, it } from "vitest";
import { estimatePitch, PitchError, proposedCutSpeed } from "@/lib/audio";
import { testRandom } from "../support/wav-corpus";

const FS = 48_000;

function tone(
  hz: number,
  seconds: number,
  opts: { amplitude?: number; noise?: number; hum?: number; seed?: number } = {},
) {
  const n = Math.round(seconds * FS);
  const rand = testRandom(opts.seed ?? 5);
  const x = new Float64Array(n);
  for (let t = 0; t < n; t++) {
    x[t] = (opts.amplitude ?? 0.3) * Math.sin((2 * Math.PI * hz * t) / FS + 0.7);
    if (opts.noise) x[t] += opts.noise * (rand() * 2 - 1);
    if (opts.hum) x[t] += opts.hum * Math.sin((2 * Math.PI * 50 * t) / FS);
  }
  return x;
}

describe("the pitch reference estimator", () => {
  it("finds an A of 440 Hz played at 78/80 (429 Hz) within 0.01 Hz and proposes 80 rpm for a 78 rpm transfer", () => {
    // Source: a disc cut at 80 rpm transferred at 78 sounds at 78/80 of its pitch: 440 × 78/80 = 429 Hz.
    const found = (440 * 78) / 80;
    const e = estimatePitch(tone(found, 5, { noise: 0.05 }), FS, 440);
    expect(Math.abs(e.peakHz - found)).toBeLessThan(0.01);
    expect(e.ratio).toBeCloseTo(78 / 80, 4);
    expect(e.confidence).toBe("clear");
    expect(e.prominenceDb).toBeGreaterThan(30);
    // Source: 78 × 440 / 429 = 80 rpm.
    expect(proposedCutSpeed(78, 440, e.peakHz)).toBe(80);
  });

  it("finds mains hum of 50 Hz on a disc cut at 76 rpm transferred at 78 (51.32 Hz) and proposes 76 rpm", () => {
    // Source: the hum recorded at 50 Hz, played 78/76 too fast: 50 × 78/76 = 51.315… Hz.
    const found = (50 * 78) / 76;
    const e = estimatePitch(tone(found, 10, { amplitude: 0.01, noise: 0.02 }), FS, 50);
    expect(Math.abs(e.peakHz - found)).toBeLessThan(0.01);
    expect(proposedCutSpeed(78, 50, e.peakHz)).toBe(76);
  });

  it("looks only near the reference: a loud 50 Hz hum does not hide an A at 429 Hz", () => {
    const x = tone(429, 4, { hum: 0.6, amplitude: 0.05 });
    const e = estimatePitch(x, FS, 440);
    expect(e.peakHz).toBeCloseTo(429, 1);
    expect(e.bandHz[0]).toBeCloseTo(374, 0);
    expect(e.bandHz[1]).toBeCloseTo(519.2, 0);
  });

  it("says a peak in noise alone is weak", () => {
    const rand = testRandom(11);
    const x = Float64Array.from({ length: 4 * FS }, () => rand() * 2 - 1);
    const e = estimatePitch(x, FS, 440);
    expect(e.confidence).toBe("weak");
    expect(e.prominenceDb).toBeLessThan(10);
  });

  it("refuses a window too short for the reference and a silent window", () => {
    expect(() => estimatePitch(tone(50, 0.1), FS, 50)).toThrow(PitchError);
    expect(() => estimatePitch(tone(50, 0.1), FS, 50)).toThrow(/at least 0\.19 s/);
    expect(() => estimatePitch(new Float64Array(FS), FS, 440)).toThrow(/silent/);
  });
});
