import { describe, expect, it } from "vitest";
import { wholeRates } from "@/lib/audio";

describe("wholeRates: the whole pair of rates libsamplerate-js is given", () => {
  it("keeps whole rates in range as they are, so an ordinary conversion is unchanged", () => {
    expect(wholeRates(96_000, 48_000)).toEqual([96_000, 48_000]);
    expect(wholeRates(44_100, 192_000)).toEqual([44_100, 192_000]);
  });

  it("turns a transfer's rate played at the cut speed into the exact ratio: 96 kHz × 80/78 → 96 kHz is 40 → 39", () => {
    expect(wholeRates((96_000 * 80) / 78, 96_000)).toEqual([40, 39]);
    // Source: 48 000 × 78 / (44 100 × 70) = 416/343 in lowest terms.
    expect(wholeRates((44_100 * 70) / 78, 48_000)).toEqual([343, 416]);
  });

  it("approximates a ratio with no small whole pair within 1e-9 (a speed off by a part in a billion), both terms at most 192 000", () => {
    const [i, o] = wholeRates(Math.PI * 10_000, 48_000);
    expect(i).toBeLessThanOrEqual(192_000);
    expect(o).toBeLessThanOrEqual(192_000);
    expect(Math.abs(o / i / (48_000 / (Math.PI * 10_000)) - 1)).toBeLessThan(1e-9);
  });

  it("refuses a rate of 0 Hz", () => {
    expect(() => wholeRates(0, 48_000)).toThrow(/above 0 Hz/);
  });
});
