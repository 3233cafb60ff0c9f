import { describe, expect, it } from "vitest";
import { analogGainDb, analogModel, CurveError, fitCurve, RIAA_SPEC } from "@/lib/curves";
import { thrownBy } from "../support/errors";

const model = analogModel(RIAA_SPEC);
const table = [30, 50, 100, 300, 500, 1000, 2000, 5000, 10000, 15000].map((hz) => ({
  hz,
  db: analogGainDb(model, hz),
}));

const errorOf = (fn: () => unknown) => thrownBy(CurveError, fn);

describe("fit refusals", () => {
  it("refuses fewer points than parameters", () => {
    const e = errorOf(() =>
      fitCurve({ points: table.slice(0, 3), kind: "playback", fit: ["turnover", "shelf", "rolloff"] }),
    );
    expect(e.parameter).toBe("points");
  });

  it("refuses a rolloff with no point above 2 kHz", () => {
    const e = errorOf(() =>
      fitCurve({ points: table.filter((p) => p.hz <= 1000), kind: "playback", fit: ["turnover", "rolloff"] }),
    );
    expect(e.parameter).toBe("rolloff");
    expect(e.message).toMatch(/above 2 kHz/);
  });

  it("refuses parameters the points cannot tell apart", () => {
    // A high-pass fitted on a table without one drifts below the lowest point and leaves no trace.
    const e = errorOf(() =>
      fitCurve({
        points: table,
        kind: "playback",
        fit: ["turnover", "shelf", "rolloff", "highpass", "levelOffset"],
      }),
    );
    expect(["highpass", "shelf", "levelOffset"]).toContain(e.parameter);
  });

  it("fits only the chosen parameters and keeps the others fixed", () => {
    const r = fitCurve({
      points: table,
      kind: "playback",
      fit: ["rolloff"],
      initial: {
        turnover: { unit: "us", value: 318 },
        shelf: { unit: "us", value: 3180 },
        rolloff: { unit: "us", value: 40 },
      },
    });
    const byName = Object.fromEntries(r.corners.map((c) => [c.parameter, c]));
    expect(byName.turnover.tauUs).toBe(318);
    expect(byName.turnover.fitted).toBe(false);
    expect(byName.rolloff.tauUs).toBeCloseTo(75, 3);
    expect(r.rmsDb).toBeLessThan(1e-4);
  });
});
