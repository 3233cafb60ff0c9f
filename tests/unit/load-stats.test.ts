import { describe, expect, it } from "vitest";
import {
  percentile,
  rampSteps,
  type Sample,
  saturationPoint,
  type StepSummary,
  stepSummaries,
  summarize,
} from "@/scripts/load/stats";

const sample = (kind: string, ms: number, ok = true, step = 0, at = 0): Sample => ({
  kind,
  ms,
  ok,
  step,
  at,
});

describe("percentile (nearest rank)", () => {
  const hundred = Array.from({ length: 100 }, (_, i) => 100 - i); // 100 … 1, unsorted on purpose

  it("takes the value at rank ceil(p·n) of the sorted values", () => {
    expect(percentile(hundred, 50)).toBe(50);
    expect(percentile(hundred, 95)).toBe(95);
    expect(percentile(hundred, 99)).toBe(99);
    expect(percentile(hundred, 100)).toBe(100);
    expect(percentile([3, 1, 2], 50)).toBe(2);
    expect(percentile([10, 20], 95)).toBe(20);
  });

  it("never reads past the values and does not reorder its input", () => {
    const v = [5, 1, 4];
    expect(percentile(v, 1)).toBe(1);
    expect(v).toEqual([5, 1, 4]);
    expect(percentile([7], 99)).toBe(7);
  });

  it("answers NaN for no values and refuses a percentile out of range", () => {
    expect(percentile([], 95)).toBeNaN();
    expect(() => percentile([1], 0)).toThrow(RangeError);
    expect(() => percentile([1], 101)).toThrow(RangeError);
  });
});

describe("summarize", () => {
  it("gives each kind its count, errors and percentiles, errors' times included", () => {
    const s = [
      ...Array.from({ length: 20 }, (_, i) => sample("list", i + 1)),
      sample("page", 40),
      sample("page", 900, false),
    ];
    const [list, page] = summarize(s);
    expect(list).toMatchObject({ kind: "list", count: 20, errors: 0, p50: 10, p95: 19, p99: 20, max: 20 });
    expect(page).toMatchObject({ kind: "page", count: 2, errors: 1, p50: 40, p95: 900, max: 900 });
  });
});

describe("ramp steps and their summaries", () => {
  it("fills the duration with steps of rising rate, the last one cut short", () => {
    expect(rampSteps(20, 10, 10, 35)).toEqual([
      { targetRate: 20, seconds: 10 },
      { targetRate: 30, seconds: 10 },
      { targetRate: 40, seconds: 10 },
      { targetRate: 50, seconds: 5 },
    ]);
  });

  it("measures a step's reached rate over its own length, not the target", () => {
    const steps = rampSteps(20, 10, 10, 20);
    const s = [
      ...Array.from({ length: 150 }, () => sample("x", 10, true, 0)),
      ...Array.from({ length: 200 }, (_, i) => sample("x", i < 189 ? 10 : 700, i !== 0, 1)),
    ];
    const rows = stepSummaries(s, steps);
    expect(rows.map((r) => [r.achievedRate, r.errors, r.p95])).toEqual([
      [15, 0, 10],
      [20, 1, 700],
    ]);
  });
});

describe("saturationPoint", () => {
  const step = (i: number, achievedRate: number, p95: number): StepSummary => ({
    step: i,
    targetRate: achievedRate,
    achievedRate,
    requests: achievedRate * 10,
    errors: 0,
    p95,
  });

  it("interpolates the rate where p95 passes the limit between the steps either side", () => {
    const s = saturationPoint([step(0, 40, 80), step(1, 80, 300), step(2, 100, 700), step(3, 100, 1500)]);
    // 300 ms at 80/s, 700 ms at 100/s: 500 ms is halfway, 90/s.
    expect(s).toEqual({ kind: "reached", rate: 90, afterStep: 1 });
  });

  it("takes the first crossing, even if a later step dips back under", () => {
    const s = saturationPoint([step(0, 50, 100), step(1, 60, 600), step(2, 70, 400)]);
    expect(s?.kind).toBe("reached");
    expect(s && s.kind === "reached" ? s.rate : 0).toBeCloseTo(50 + (400 / 500) * 10);
  });

  it("says when the first step is already over the limit, and when it is never passed", () => {
    expect(saturationPoint([step(0, 30, 800), step(1, 40, 900)])).toEqual({
      kind: "at or below first step",
      rate: 30,
    });
    expect(saturationPoint([step(0, 30, 100), step(1, 45, 200), step(2, 44, 250)])).toEqual({
      kind: "not reached",
      highestRate: 45,
      p95AtHighest: 200,
    });
    expect(saturationPoint([])).toBeNull();
  });

  it("uses the limit it is given", () => {
    const s = saturationPoint([step(0, 10, 50), step(1, 20, 150)], 100);
    expect(s).toEqual({ kind: "reached", rate: 15, afterStep: 0 });
  });
});
