import { describe, expect, it } from "vitest";
import { analogModel, analogResponse, designIir, sosResponse } from "@/lib/curves";
import type { CurveSpec } from "@/lib/curves";
import { runPython } from "../support/python";

/** Seeded PRNG (mulberry32) so the random curves are the same on every run. */
function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function randomCurve(rand: () => number): {
  spec: CurveSpec;
  taus: Record<string, number>;
  refHz: number;
  refDb: number;
} {
  const taus: Record<string, number> = {};
  taus.turnover = 100 + rand() * 700;
  const bass = rand();
  if (bass < 0.7) taus.shelf = taus.turnover * (2 + rand() * 15);
  if (bass > 0.4) taus.highpass = 2000 + rand() * 20000;
  if (rand() < 0.8) taus.rolloff = 20 + rand() * 130;
  if (rand() < 0.3) taus.ultrasonic = 2 + rand() * 6;
  const refHz = rand() < 0.5 ? 1000 : 100 + rand() * 4000;
  const refDb = rand() < 0.5 ? 0 : (rand() - 0.5) * 20;
  const spec: CurveSpec = { reference: { hz: refHz, db: refDb } };
  for (const [name, v] of Object.entries(taus)) spec[name as "turnover"] = { unit: "us", value: v };
  return { spec, taus, refHz, refDb };
}

describe("lib/curves against scipy.signal", () => {
  it("analog response (freqs_zpk, freqs) and IIR sections (sosfreqz) agree to 1e-6 dB", async () => {
    // Source: scipy.signal.freqs_zpk / freqs for the analog model built in
    // tests/reference/py/curve_model.py from the time constants alone, and
    // scipy.signal.sosfreqz for lib/curves' own sections.
    const rand = prng(20240611);
    const rates = [44100, 48000, 96000, 192000, 384000];
    const hz = Array.from({ length: 60 }, (_, i) => 10 * Math.pow(2000, i / 59)); // 10 Hz – 20 kHz
    const cases = Array.from({ length: 40 }, (_, i) => {
      const c = randomCurve(rand);
      const fs = rates[i % rates.length];
      const design = designIir(c.spec, fs);
      const model = analogModel(c.spec);
      return { ...c, fs, design, model };
    });
    const ref = await runPython<
      {
        db: number[];
        deg: number[];
        dbPoly: number[];
        zeros: number[];
        poles: number[];
        k: number;
        sosDb: number[];
        sosDeg: number[];
      }[]
    >("analog_check.py", {
      curves: cases.map((c) => ({
        ...c.taus,
        refHz: c.refHz,
        refDb: c.refDb,
        hz,
        sos: c.design.sos,
        fs: c.fs,
      })),
    });
    cases.forEach((c, i) => {
      const ours = analogResponse(c.model, hz);
      const dig = sosResponse(c.design.sos, hz, c.fs);
      for (let j = 0; j < hz.length; j++) {
        expect(Math.abs(ours.gainDb[j] - ref[i].db[j])).toBeLessThan(1e-6);
        expect(Math.abs(ours.gainDb[j] - ref[i].dbPoly[j])).toBeLessThan(1e-6);
        const dPhase = ((((ours.phaseDeg[j] - ref[i].deg[j]) % 360) + 540) % 360) - 180;
        expect(Math.abs(dPhase)).toBeLessThan(1e-6);
        expect(Math.abs(dig.gainDb[j] - ref[i].sosDb[j])).toBeLessThan(1e-6);
        const dDig = ((((dig.phaseDeg[j] - ref[i].sosDeg[j]) % 360) + 540) % 360) - 180;
        expect(Math.abs(dDig)).toBeLessThan(1e-6);
      }
      // Same zeros, poles and zpk gain as scipy's own construction.
      const zs = [...c.model.zerosRadS].sort((a, b) => a - b);
      const ps = [...c.model.polesRadS].sort((a, b) => a - b);
      zs.forEach((z, j) =>
        expect(Math.abs(z - ref[i].zeros[j])).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(z))),
      );
      ps.forEach((p, j) => expect(Math.abs(p - ref[i].poles[j])).toBeLessThanOrEqual(1e-9 * Math.abs(p)));
      expect(Math.abs(c.model.k / ref[i].k - 1)).toBeLessThan(1e-9);
    });
  });
});
