import { describe, expect, it } from "vitest";
import { db10kToUs, hzToUs, resolveCurve, usToDb10k, usToHz } from "@/lib/curves";

describe("corner unit conversions", () => {
  it("turnover 500 Hz ↔ 318.3 µs", () => {
    // f = 1/(2πτ): 500 Hz is 318.31 µs, and the RIAA 318 µs turnover sits at 500.5 Hz (common practice).
    expect(hzToUs(500)).toBeCloseTo(318.31, 2);
    expect(usToHz(318)).toBeCloseTo(500.49, 2);
    expect(usToHz(hzToUs(437.5))).toBeCloseTo(437.5, 9);
  });

  it("13.7 dB at 10 kHz ↔ 75.4 µs", () => {
    // 75 µs is quoted as a 13.7 dB rolloff at 10 kHz (common practice).
    expect(db10kToUs(13.7)).toBeCloseTo(75.4, 1);
    expect(usToDb10k(75)).toBeCloseTo(13.66, 2);
    expect(usToDb10k(db10kToUs(5))).toBeCloseTo(5, 9);
  });

  it("keeps the entered value beside the time constant the filter uses", () => {
    const c = resolveCurve({
      turnover: { unit: "hz", value: 500 },
      shelf: { unit: "hz", value: 50 },
      rolloff: { unit: "db10k", value: 13.7 },
    });
    expect(c.turnover?.entered).toEqual({ unit: "hz", value: 500 });
    expect(c.turnover?.tauUs).toBeCloseTo(318.31, 2);
    expect(c.turnover?.filterTauUs).toBe(c.turnover?.tauUs);
    expect(c.rolloff?.tauUs).toBeCloseTo(75.4, 1);
    expect(c.rolloff?.db10k).toBeCloseTo(13.7, 9);
    expect(c.reference).toEqual({ hz: 1000, db: 0 });
  });

  it("a rolloff of 0 dB at 10 kHz means none", () => {
    const c = resolveCurve({
      turnover: { unit: "us", value: 318 },
      shelf: { unit: "us", value: 3180 },
      rolloff: { unit: "db10k", value: 0 },
    });
    expect(c.rolloff).toBeNull();
  });

  it("scales every corner frequency by the speed ratio", () => {
    // A disc cut at 78 rpm transferred at 80 rpm: all frequencies × 80/78 (DESIGN.md, "Speed matters").
    const ratio = 80 / 78;
    const base = resolveCurve({
      turnover: { unit: "us", value: 318 },
      shelf: { unit: "us", value: 3180 },
      rolloff: { unit: "us", value: 75 },
    });
    const fast = resolveCurve({
      turnover: { unit: "us", value: 318 },
      shelf: { unit: "us", value: 3180 },
      rolloff: { unit: "us", value: 75 },
      speedRatio: ratio,
    });
    for (const name of ["turnover", "shelf", "rolloff"] as const) {
      expect(fast[name]!.filterHz / base[name]!.filterHz).toBeCloseTo(ratio, 12);
      expect(fast[name]!.tauUs).toBe(base[name]!.tauUs);
    }
  });
});
