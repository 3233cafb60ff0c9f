// The load run's arithmetic: percentiles of response times, per-kind summaries, and the
// saturation point of a rate ramp. Pure functions, unit-tested (tests/unit/load-stats.test.ts).

/** One request the load run made. `at` is when it was sent, in ms since the run began. */
export interface Sample {
  kind: string;
  at: number;
  ms: number;
  ok: boolean;
  /** The ramp step the request was sent in (0 without a ramp). */
  step: number;
}

/**
 * The p-th percentile (0 < p ≤ 100) by the nearest-rank method: the smallest value that at
 * least p % of the values are less than or equal to. NaN for no values.
 */
export function percentile(values: readonly number[], p: number): number {
  if (!(p > 0 && p <= 100)) throw new RangeError(`a percentile is above 0 and at most 100, not ${p}`);
  if (values.length === 0) return Number.NaN;
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.ceil((p / 100) * sorted.length) - 1];
}

export interface KindSummary {
  kind: string;
  count: number;
  errors: number;
  p50: number;
  p95: number;
  p99: number;
  max: number;
}

/** p50, p95, p99 and the worst time of each kind (errors included in the times), sorted by kind. */
export function summarize(samples: readonly Sample[]): KindSummary[] {
  const byKind = new Map<string, Sample[]>();
  for (const s of samples) {
    const list = byKind.get(s.kind);
    if (list) list.push(s);
    else byKind.set(s.kind, [s]);
  }
  return [...byKind.entries()]
    .sort(([a], [b]) => a.localeCompare(b))
    .map(([kind, list]) => {
      const ms = list.map((s) => s.ms);
      return {
        kind,
        count: list.length,
        errors: list.filter((s) => !s.ok).length,
        p50: percentile(ms, 50),
        p95: percentile(ms, 95),
        p99: percentile(ms, 99),
        max: Math.max(...ms),
      };
    });
}

/** One step of a rate ramp: the rate asked for, the rate reached, and the p95 of every request in it. */
export interface StepSummary {
  step: number;
  targetRate: number;
  achievedRate: number;
  requests: number;
  errors: number;
  p95: number;
}

/** Groups samples by ramp step; a step's achieved rate is its requests over its length in seconds. */
export function stepSummaries(
  samples: readonly Sample[],
  steps: readonly { targetRate: number; seconds: number }[],
): StepSummary[] {
  return steps.flatMap((def, step) => {
    const list = samples.filter((s) => s.step === step);
    if (list.length === 0 || def.seconds <= 0) return [];
    return [
      {
        step,
        targetRate: def.targetRate,
        achievedRate: list.length / def.seconds,
        requests: list.length,
        errors: list.filter((s) => !s.ok).length,
        p95: percentile(
          list.map((s) => s.ms),
          95,
        ),
      },
    ];
  });
}

export type Saturation =
  | { kind: "reached"; rate: number; afterStep: number }
  | { kind: "at or below first step"; rate: number }
  | { kind: "not reached"; highestRate: number; p95AtHighest: number };

/**
 * The request rate at which p95 passes `limitMs` (500 ms in the issue's terms), from a ramp's
 * steps in the order they ran: the first step whose p95 is above the limit and the step before
 * it, with the rate interpolated linearly on p95 between the two steps' achieved rates. A
 * ramp whose first step is already over says so; one that never passes the limit gives the
 * highest rate it reached.
 */
export function saturationPoint(steps: readonly StepSummary[], limitMs = 500): Saturation | null {
  if (steps.length === 0) return null;
  const i = steps.findIndex((s) => s.p95 > limitMs);
  if (i === -1) {
    const highest = steps.reduce((a, b) => (b.achievedRate > a.achievedRate ? b : a));
    return { kind: "not reached", highestRate: highest.achievedRate, p95AtHighest: highest.p95 };
  }
  if (i === 0) return { kind: "at or below first step", rate: steps[0].achievedRate };
  const below = steps[i - 1];
  const over = steps[i];
  const f = (limitMs - below.p95) / (over.p95 - below.p95);
  return {
    kind: "reached",
    rate: below.achievedRate + f * (over.achievedRate - below.achievedRate),
    afterStep: below.step,
  };
}

/** The steps of a ramp from `start` req/s, `step` more each `stepSeconds`, filling `durationSeconds`. */
export function rampSteps(
  start: number,
  step: number,
  stepSeconds: number,
  durationSeconds: number,
): { targetRate: number; seconds: number }[] {
  const out: { targetRate: number; seconds: number }[] = [];
  for (let t = 0, r = start; t < durationSeconds; t += stepSeconds, r += step) {
    out.push({ targetRate: r, seconds: Math.min(stepSeconds, durationSeconds - t) });
  }
  return out;
}
