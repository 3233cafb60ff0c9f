"use client";
/**
 * A calibration on the plot: the curve the test disc was cut with and the curve fitted to
 * the chain's measured points (both as playback curves), the points themselves levelled
 * onto the expected curve, and below them the residuals: each point against the expected
 * curve (what the chain adds) and against the fitted one (what the fit leaves).
 */
import { scaleLinear, scaleLog } from "d3-scale";
import { useMemo } from "react";
import { ResponsePlot } from "@/components/curves/response-plot";
import { formatHz } from "@/components/curves/plot-format";
import { SmallPlotGrid } from "@/components/curves/small-plot-grid";
import { type CurvePoint, type CurveSpec, type FitResult, fitCurve } from "@/lib/curves";
import type { calibrationFitParameters } from "@/lib/validation/equipment";

export interface CalibrationFits {
  /** The corners chosen free: the curve the chain reproduces. */
  fitted: FitResult;
  /** Only the level free, against the expected curve: the residuals are the chain's deviation. */
  deviation: FitResult;
}

/** The same two fits the server records (lib/equipment/chains.ts), worked out here for the plots. */
export function calibrationFits(
  points: CurvePoint[],
  kind: "recording" | "playback",
  fit: (typeof calibrationFitParameters)[number][],
  expected: CurveSpec,
): CalibrationFits {
  return {
    fitted: fitCurve({ points, kind, fit, initial: expected }),
    deviation: fitCurve({ points, kind, fit: ["levelOffset"], initial: expected }),
  };
}

export function CalibrationPlots({
  expected,
  expectedName,
  fits,
  pointsKind,
  testId = "calibration-plot",
}: {
  expected: CurveSpec;
  expectedName: string;
  fits: CalibrationFits;
  pointsKind: "recording" | "playback";
  testId?: string;
}) {
  const sign = pointsKind === "recording" ? -1 : 1;
  const points = useMemo(
    () => fits.deviation.residuals.map((r) => ({ hz: r.hz, db: sign * r.db - fits.deviation.levelOffsetDb })),
    [fits, sign],
  );
  const curves = useMemo(
    () => [
      { label: `Expected: ${expectedName}`, spec: expected },
      { label: "Fitted to the measured points", spec: fits.fitted.spec },
    ],
    [expected, expectedName, fits],
  );
  return (
    <div className="space-y-3" data-testid={testId}>
      <ResponsePlot
        curves={curves}
        points={points}
        pointsLabel="Measured (levelled onto the expected curve)"
        showPhase={false}
        showAsymptotes={false}
        height={320}
        testId={`${testId}-response`}
      />
      <ResidualsPlot fits={fits} pointsKind={pointsKind} />
    </div>
  );
}

function ResidualsPlot({
  fits,
  pointsKind,
}: {
  fits: CalibrationFits;
  pointsKind: "recording" | "playback";
}) {
  const width = 720;
  const height = 170;
  const m = { top: 10, right: 14, bottom: 24, left: 50 };
  const w = width - m.left - m.right;
  const h = height - m.top - m.bottom;
  const hz = fits.deviation.residuals.map((r) => r.hz);
  const lo = Math.min(10, ...hz);
  const hi = Math.max(30_000, ...hz);
  const x = scaleLog().domain([lo, hi]).range([0, w]);
  const all = [...fits.deviation.residuals, ...fits.fitted.residuals].map((r) => Math.abs(r.residualDb));
  const peak = Math.max(0.2, ...all);
  const y = scaleLinear()
    .domain([-peak * 1.15, peak * 1.15])
    .range([h, 0])
    .nice(4);
  const ticks = [10, 20, 50, 100, 200, 500, 1000, 2000, 5000, 10_000, 20_000].filter(
    (t) => t >= lo && t <= hi,
  );
  // The fit's residuals are playback target − model; a recording table's points were turned
  // over for it, so measured − expected (in the chain's own output) is the residual turned back.
  const turn = pointsKind === "recording" ? -1 : 1;
  const series = [
    {
      label: "Measured − expected (the chain's deviation)",
      color: "#a9591a",
      rows: fits.deviation.residuals,
      r: 3.5,
    },
    {
      label: "Measured − fitted (what the fit leaves)",
      color: "#2f6f6a",
      rows: fits.fitted.residuals,
      r: 2.5,
    },
  ];
  return (
    <figure>
      <figcaption className="mb-1 flex flex-wrap gap-4 text-xs text-ink-soft">
        {series.map((s) => (
          <span key={s.label} className="inline-flex items-center gap-1.5">
            <span className="inline-block h-2.5 w-2.5 rounded-full" style={{ background: s.color }} />
            {s.label}
          </span>
        ))}
        <span className="ml-auto font-mono">
          deviation {fits.deviation.rmsDb.toFixed(2)} dB RMS, worst {fits.deviation.worstDb.toFixed(2)} dB at{" "}
          {formatHz(fits.deviation.worstHz)}
        </span>
      </figcaption>
      <svg
        viewBox={`0 0 ${width} ${height}`}
        className="h-auto w-full"
        role="img"
        aria-label={`Residuals: ${fits.deviation.rmsDb.toFixed(2)} dB RMS from the expected curve, ${fits.fitted.rmsDb.toFixed(2)} dB from the fitted one`}
        data-testid="calibration-residuals"
      >
        <g transform={`translate(${m.left},${m.top})`}>
          <SmallPlotGrid
            x={x}
            y={y}
            width={w}
            height={h}
            frequencyTicks={ticks}
            digits={peak < 0.5 ? 2 : 1}
            unit=" dB"
          />
          {series.map((s) =>
            s.rows.map((r, i) => (
              <g key={`${s.color}-${i}`}>
                <line
                  x1={x(r.hz)}
                  x2={x(r.hz)}
                  y1={y(0)}
                  y2={y(turn * r.residualDb)}
                  stroke={s.color}
                  strokeWidth={1}
                  opacity={0.6}
                />
                <circle cx={x(r.hz)} cy={y(turn * r.residualDb)} r={s.r} fill={s.color} />
              </g>
            )),
          )}
        </g>
      </svg>
    </figure>
  );
}
