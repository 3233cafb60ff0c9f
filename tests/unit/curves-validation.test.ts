import { describe, expect, it } from "vitest";
import { CurveError, designIir, resolveCurve, validateSampleRate } from "@/lib/curves";
import type { CurveSpec } from "@/lib/curves";
import { thrownBy } from "../support/errors";

const riaa: CurveSpec = {
  turnover: { unit: "us", value: 318 },
  shelf: { unit: "us", value: 3180 },
  rolloff: { unit: "us", value: 75 },
};

const errorOf = (fn: () => unknown) => thrownBy(CurveError, fn);

describe("curve validation names the parameter", () => {
  it.each([
    ["turnover", { ...riaa, turnover: { unit: "us", value: -318 } }],
    ["turnover", { ...riaa, turnover: { unit: "hz", value: 0 } }],
    ["rolloff", { ...riaa, rolloff: { unit: "us", value: Number.NaN } }],
    ["shelf", { ...riaa, shelf: { unit: "us", value: Number.POSITIVE_INFINITY } }],
    ["rolloff", { ...riaa, rolloff: { unit: "db10k", value: 61 } }],
    ["highpass", { ...riaa, highpass: { unit: "db10k", value: 3 } }],
  ] as [string, CurveSpec][])("refuses a bad %s value", (parameter, spec) => {
    expect(errorOf(() => resolveCurve(spec)).parameter).toBe(parameter);
  });

  it("refuses a shelf at or above the turnover frequency", () => {
    const e = errorOf(() => resolveCurve({ ...riaa, shelf: { unit: "us", value: 300 } }));
    expect(e.parameter).toBe("shelf");
    expect(e.message).toMatch(/below the turnover/);
  });

  it("refuses a turnover with neither shelf nor high-pass, asking for one", () => {
    const e = errorOf(() =>
      resolveCurve({ turnover: { unit: "hz", value: 500 }, rolloff: { unit: "db10k", value: 10 } }),
    );
    expect(e.parameter).toBe("shelf");
    expect(e.message).toMatch(/unbounded bass gain/);
    expect(e.message).toMatch(/high-pass/);
  });

  it("accepts a turnover with a high-pass and no shelf, and a flat-bass curve", () => {
    expect(
      resolveCurve({ turnover: { unit: "hz", value: 500 }, highpass: { unit: "us", value: 7950 } }).flatBass,
    ).toBe(false);
    expect(resolveCurve({ rolloff: { unit: "db10k", value: 10 } }).flatBass).toBe(true);
  });

  it.each([[0], [-1], [Number.NaN]])("refuses speed ratio %s", (ratio) => {
    expect(errorOf(() => resolveCurve({ ...riaa, speedRatio: ratio })).parameter).toBe("speedRatio");
  });

  it.each([[5], [40_000], [Number.NaN]])("refuses reference frequency %s Hz", (hz) => {
    expect(errorOf(() => resolveCurve({ ...riaa, reference: { hz, db: 0 } })).parameter).toBe("reference.hz");
  });

  it.each([[32_000], [22_050], [400_000], [Number.NaN]])("refuses sample rate %s Hz", (rate) => {
    expect(errorOf(() => validateSampleRate(rate)).parameter).toBe("sampleRateHz");
    expect(errorOf(() => designIir(riaa, rate)).parameter).toBe("sampleRateHz");
  });

  it("accepts the ends of the sample-rate range", () => {
    expect(() => validateSampleRate(44_100)).not.toThrow();
    expect(() => validateSampleRate(384_000)).not.toThrow();
  });
});
