import { describe, expect, it } from "vitest";
import { fitCurve } from "@/lib/curves";
import { runPython } from "../support/python";

const TABLE_HZ = [
  20, 30, 40, 50, 60, 80, 100, 150, 200, 300, 400, 500, 700, 1000, 1500, 2000, 3000, 4000, 5000, 7000, 10000,
  12000, 15000, 20000,
];

async function riaaTable(): Promise<{ hz: number; db: number }[]> {
  // Source: RIAA playback levels from the IEC 60098 time constants via
  // scipy.signal.freqs, rounded to 0.01 dB like printed tables (py/fit_table.py).
  const ref = await runPython<{ db: number[] }>("fit_table.py", { hz: TABLE_HZ });
  return TABLE_HZ.map((hz, i) => ({ hz, db: ref.db[i] }));
}

describe("fitting the model to a RIAA table", () => {
  it("recovers 3180/318/75 µs within 0.5 % from a distant start", async () => {
    const points = await riaaTable();
    const result = fitCurve({
      points,
      kind: "playback",
      fit: ["turnover", "shelf", "rolloff"],
      initial: {
        turnover: { unit: "hz", value: 350 },
        shelf: { unit: "hz", value: 30 },
        rolloff: { unit: "db10k", value: 8 },
      },
    });
    const tau = Object.fromEntries(result.corners.map((c) => [c.parameter, c.tauUs]));
    // Source: IEC 60098 time constants 3180, 318, 75 µs.
    expect(Math.abs(tau.shelf / 3180 - 1)).toBeLessThan(0.005);
    expect(Math.abs(tau.turnover / 318 - 1)).toBeLessThan(0.005);
    expect(Math.abs(tau.rolloff / 75 - 1)).toBeLessThan(0.005);
    // Rounding to 0.01 dB leaves at most 0.005 dB per point (plus fit slack).
    expect(result.worstDb).toBeLessThan(0.01);
  });

  it("recovers the same from the recording table (negated) with a level offset", async () => {
    const points = (await riaaTable()).map((p) => ({ hz: p.hz, db: -p.db + 3 }));
    const result = fitCurve({
      points,
      kind: "recording",
      fit: ["turnover", "shelf", "rolloff", "levelOffset"],
    });
    const tau = Object.fromEntries(result.corners.map((c) => [c.parameter, c.tauUs]));
    expect(Math.abs(tau.turnover / 318 - 1)).toBeLessThan(0.005);
    expect(Math.abs(tau.rolloff / 75 - 1)).toBeLessThan(0.005);
    expect(Math.abs(result.levelOffsetDb - -3)).toBeLessThan(0.01);
  });

  it("reports residuals that reflect ±0.2 dB of added noise", async () => {
    // Seeded PRNG (mulberry32): uniform noise in ±0.2 dB has RMS 0.2/√3 ≈ 0.115 dB
    // (uniform-distribution variance a²/3, textbook statistics); a 3-parameter fit
    // of 24 points absorbs a little of it, so RMS lands between 0.06 and 0.16 dB.
    let a = 12345;
    const rand = () => {
      a = (a + 0x6d2b79f5) >>> 0;
      let t = Math.imul(a ^ (a >>> 15), a | 1);
      t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
      return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    };
    const points = (await riaaTable()).map((p) => ({ hz: p.hz, db: p.db + (rand() * 2 - 1) * 0.2 }));
    const result = fitCurve({ points, kind: "playback", fit: ["turnover", "shelf", "rolloff"] });
    expect(result.rmsDb).toBeGreaterThan(0.06);
    expect(result.rmsDb).toBeLessThan(0.16);
    expect(result.worstDb).toBeGreaterThan(0.1);
    expect(result.worstDb).toBeLessThan(0.3);
    expect(result.residuals).toHaveLength(points.length);
  });
});
