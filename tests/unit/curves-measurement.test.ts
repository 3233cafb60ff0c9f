// A test-disc measurement read and fitted the one way the server and the bench's form share.
import { describe, expect, it } from "vitest";
import {
  analogGainDb,
  analogModel,
  atCutSpeed,
  CurveError,
  fitMeasuredPoints,
  measuredPlaybackPoints,
  RIAA_SPEC,
} from "@/lib/curves";
import { thrownBy } from "../support/errors";

describe("a measured points file", () => {
  it("fits from the chosen curve at its cut speed, whatever speed ratio the choice carries", () => {
    // Playback levels of the RIAA curve (IEC 60098 time constants) 2 dB up, as a test disc would give them.
    const model = analogModel(RIAA_SPEC);
    const hz = [50, 100, 300, 1000, 3000, 10_000];
    const text = ["hz,db", ...hz.map((f) => `${f},${(analogGainDb(model, f) + 2).toFixed(4)}`)].join("\n");
    const chosen = { ...RIAA_SPEC, speedRatio: 78 / 80 };
    const fit = fitMeasuredPoints(text, "playback", ["levelOffset"], chosen);
    expect(fit.fittedSpec.speedRatio ?? 1).toBe(1);
    expect(fit.levelOffsetDb).toBeCloseTo(2, 3);
    expect(fit.rmsDb).toBeLessThan(0.001);
    // The points, levelled, lie on the fitted curve.
    for (const p of measuredPlaybackPoints(fit)) expect(p.db).toBeCloseTo(analogGainDb(model, p.hz), 2);
    expect(atCutSpeed(chosen)).toEqual({ ...RIAA_SPEC, speedRatio: undefined });
    expect("speedRatio" in atCutSpeed(chosen)).toBe(false);
  });

  it("keeps at most 5 000 points", () => {
    const text = Array.from({ length: 5001 }, (_, i) => `${20 + i},0`).join("\n");
    const e = thrownBy(CurveError, () => fitMeasuredPoints(text, "playback", ["levelOffset"], RIAA_SPEC));
    expect(e.message).toBe("The measurement has 5001 points; at most 5000 are kept.");
  });
});
