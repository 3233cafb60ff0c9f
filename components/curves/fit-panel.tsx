"use client";
/**
 * Fit the curve model to a table of (Hz, dB) points in the browser: a
 * published curve table (recording or playback) or a measured test-disc
 * transfer. Shows the fitted corners, the residuals and lets the result be
 * taken into the editor.
 */
import { scaleLinear, scaleLog } from "d3-scale";
import { useId, useState } from "react";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import {
  analogGainDb,
  analogModel,
  CurveError,
  type CurvePoint,
  type CurveSpec,
  type FitParameter,
  type FitResult,
  fitCurve,
  parsePointsCsv,
  PointsParseError,
  RIAA_SPEC,
} from "@/lib/curves";
import { FitParameterChoice, fitParameterLabels, PointsKindChoice } from "./fit-choices";
import { formatHz, formatNumber, formatSigned } from "./plot-format";
import { SmallPlotGrid } from "./small-plot-grid";

const PARAMS: FitParameter[] = ["turnover", "shelf", "rolloff", "highpass", "ultrasonic", "levelOffset"];

/** A recording table worked out from the RIAA time constants, to show the format and try the fit. */
function exampleTable(): string {
  const model = analogModel(RIAA_SPEC);
  const hz = [20, 30, 50, 70, 100, 200, 300, 500, 700, 1000, 2000, 3000, 5000, 7000, 10_000, 15_000, 20_000];
  return [
    "hz,db",
    "# recording characteristic, worked out from 3180/318/75 µs",
    ...hz.map((f) => `${f},${(-analogGainDb(model, f)).toFixed(2)}`),
  ].join("\n");
}

export interface FitPoints {
  /** Playback levels, shifted by the fitted level offset when there is a fit, ready to lie on the plotted curve. */
  points: CurvePoint[];
  label: string;
}

export function FitPanel({
  spec,
  onLoad,
  onPoints,
}: {
  spec: CurveSpec;
  onLoad: (spec: CurveSpec) => void;
  onPoints: (p: FitPoints | null) => void;
}) {
  const id = useId();
  const [text, setText] = useState("");
  const [kind, setKind] = useState<"playback" | "recording">("recording");
  const [params, setParams] = useState<FitParameter[]>(["turnover", "shelf", "rolloff", "levelOffset"]);
  const [result, setResult] = useState<FitResult | null>(null);
  const [error, setError] = useState<{ title: string; message: string } | null>(null);
  const [fileName, setFileName] = useState<string | null>(null);

  const readFile = async (file: File | undefined | null) => {
    if (!file) return;
    setFileName(file.name);
    const body = await file.text();
    setText(body);
    setResult(null);
    setError(null);
    onPoints(null);
  };

  const run = () => {
    setError(null);
    setResult(null);
    let points: CurvePoint[];
    try {
      points = parsePointsCsv(text);
    } catch (err) {
      onPoints(null);
      setError({
        title: "The table cannot be read",
        message: err instanceof PointsParseError ? err.message : String(err),
      });
      return;
    }
    try {
      const r = fitCurve({ points, kind, fit: params, initial: spec });
      setResult(r);
      onPoints({
        points: r.residuals.map((p) => ({
          hz: p.hz,
          db: (kind === "recording" ? -p.db : p.db) - r.levelOffsetDb,
        })),
        label:
          `Fit points (${kind === "recording" ? "recording table, sign turned" : "playback"}` +
          `${Math.abs(r.levelOffsetDb) > 0.005 ? `, level ${formatSigned(-r.levelOffsetDb, 2)} dB` : ""})`,
      });
    } catch (err) {
      const sign = kind === "recording" ? -1 : 1;
      onPoints({ points: points.map((p) => ({ hz: p.hz, db: sign * p.db })), label: "Points (not fitted)" });
      const message = err instanceof Error ? err.message : String(err);
      const where =
        err instanceof CurveError && err.parameter in fitParameterLabels
          ? ` (${fitParameterLabels[err.parameter as FitParameter]})`
          : "";
      setError({ title: `The fit cannot determine the curve${where}`, message });
    }
  };

  return (
    <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_minmax(0,1.15fr)]" data-testid="fit-panel">
      <div className="space-y-4">
        <div className="space-y-1.5">
          <label htmlFor={`${id}-csv`} className="block text-sm font-medium">
            Points as <span className="font-mono">hz,db</span>, one per line
          </label>
          <textarea
            id={`${id}-csv`}
            value={text}
            onChange={(e) => setText(e.target.value)}
            onDragOver={(e) => e.preventDefault()}
            onDrop={(e) => {
              e.preventDefault();
              void readFile(e.dataTransfer.files?.[0]);
            }}
            rows={9}
            spellCheck={false}
            placeholder={"hz,db\n50,-16.9\n500,-2.6\n1000,0\n10000,13.7\n# or drop a .csv file here"}
            className={
              "block w-full rounded-md border border-paper-edge bg-white px-3 py-2 font-mono " +
              "text-xs leading-5 shadow-inner shadow-paper-deep/60 focus:border-shellac"
            }
            data-testid="fit-csv"
            aria-describedby={`${id}-csv-hint`}
          />
          <p id={`${id}-csv-hint`} className="text-xs text-ink-faint">
            A header line and <span className="font-mono">#</span> comments are allowed. Drop a file on the
            box or choose one below.
          </p>
          <div className="flex flex-wrap items-center gap-3">
            <label htmlFor={`${id}-file`} className="text-sm text-ink-soft">
              CSV file
            </label>
            <input
              id={`${id}-file`}
              type="file"
              accept=".csv,text/csv,text/plain"
              onChange={(e) => void readFile(e.target.files?.[0])}
              className={
                "text-sm file:mr-3 file:rounded-md file:border file:border-paper-edge file:bg-white " +
                "file:px-3 file:py-1.5 file:text-sm file:text-ink hover:file:border-ink-faint"
              }
              data-testid="fit-file"
            />
            {fileName ? <span className="text-xs text-ink-faint">read {fileName}</span> : null}
            <Button type="button" variant="quiet" size="sm" onClick={() => setText(exampleTable())}>
              Insert an example table
            </Button>
          </div>
        </div>

        <fieldset>
          <legend className="mb-1.5 text-sm font-medium">The table gives</legend>
          <PointsKindChoice
            name={`${id}-kind`}
            value={kind}
            onChange={setKind}
            words={{ recording: "the recording characteristic (cut)", playback: "the playback curve" }}
            testId={(k) => `fit-kind-${k}`}
          />
        </fieldset>

        <fieldset>
          <legend className="mb-1.5 text-sm font-medium">Fit these; keep the rest as in the editor</legend>
          <FitParameterChoice
            parameters={PARAMS}
            value={params}
            onChange={setParams}
            className="grid grid-cols-2 gap-x-4 gap-y-1.5 text-sm sm:grid-cols-3"
            testId={(p) => `fit-param-${p}`}
          />
        </fieldset>

        <Button type="button" onClick={run} disabled={!text.trim()} data-testid="fit-run">
          Fit the curve to these points
        </Button>
      </div>

      <div className="space-y-3" aria-live="polite">
        {error ? (
          <Notice tone="error" title={error.title} testId="fit-error">
            {error.message}
          </Notice>
        ) : null}
        {result ? (
          <FitResultView result={result} onLoad={() => onLoad(result.spec)} />
        ) : !error ? (
          <div
            className={
              "flex h-full min-h-40 items-center justify-center rounded-lg border border-dashed " +
              "border-paper-edge p-6 text-center text-sm text-ink-faint"
            }
          >
            Fitted time constants, the error at each point and a plot of the residuals appear here.
          </div>
        ) : null}
      </div>
    </div>
  );
}

function FitResultView({ result, onLoad }: { result: FitResult; onLoad: () => void }) {
  return (
    <div className="space-y-3" data-testid="fit-result">
      <dl className="grid grid-cols-3 gap-2 text-sm">
        <div className="rounded-md bg-paper-deep/60 px-3 py-2">
          <dt className="text-xs text-ink-soft">RMS error</dt>
          <dd className="font-mono font-semibold" data-testid="fit-rms">
            {result.rmsDb.toFixed(3)} dB
          </dd>
        </div>
        <div className="rounded-md bg-paper-deep/60 px-3 py-2">
          <dt className="text-xs text-ink-soft">Worst point</dt>
          <dd className="font-mono font-semibold">
            {result.worstDb.toFixed(3)} dB{" "}
            <span className="font-normal text-ink-faint">at {formatHz(result.worstHz)}</span>
          </dd>
        </div>
        <div className="rounded-md bg-paper-deep/60 px-3 py-2">
          <dt className="text-xs text-ink-soft">Level offset</dt>
          <dd className="font-mono font-semibold">{formatSigned(result.levelOffsetDb, 2)} dB</dd>
        </div>
      </dl>
      <table className="w-full text-left text-sm">
        <caption className="sr-only">Fitted corners</caption>
        <thead className="text-xs text-ink-soft">
          <tr>
            <th scope="col" className="py-1 pr-2 font-semibold">
              Corner
            </th>
            <th scope="col" className="py-1 pr-2 text-right font-semibold">
              µs
            </th>
            <th scope="col" className="py-1 pr-2 text-right font-semibold">
              Hz
            </th>
            <th scope="col" className="py-1 pr-2 text-right font-semibold">
              dB attenuation at 10 kHz
            </th>
            <th scope="col" className="py-1 font-semibold">
              &nbsp;
            </th>
          </tr>
        </thead>
        <tbody className="font-mono">
          {result.corners.map((c) => (
            <tr key={c.parameter} className="border-t border-paper-edge/70">
              <td className="py-1 pr-2 font-sans">{fitParameterLabels[c.parameter]}</td>
              <td className="py-1 pr-2 text-right">{formatNumber(c.tauUs, 5)}</td>
              <td className="py-1 pr-2 text-right">{formatNumber(c.hz, 5)}</td>
              <td className="py-1 pr-2 text-right">{c.db10k !== undefined ? c.db10k.toFixed(2) : ""}</td>
              <td className="py-1 font-sans text-xs text-ink-faint">{c.fitted ? "fitted" : "kept"}</td>
            </tr>
          ))}
        </tbody>
      </table>
      <ResidualPlot residuals={result.residuals} rmsDb={result.rmsDb} />
      <div className="flex flex-wrap items-center gap-3">
        <Button type="button" variant="secondary" onClick={onLoad} data-testid="fit-load">
          Load the fitted curve into the editor
        </Button>
        <span className="text-xs text-ink-faint">
          {result.iterations} iterations · condition number {result.conditionNumber.toFixed(1)}
        </span>
      </div>
    </div>
  );
}

/** The residual at each point of a fit (table − fitted curve), as stems around 0 dB. */
export function ResidualPlot({
  residuals,
  rmsDb,
  caption = "Residual at each point, table − fitted curve (dB)",
}: {
  residuals: FitResult["residuals"];
  rmsDb: number;
  caption?: string;
}) {
  const width = 520;
  const height = 150;
  const m = { top: 10, right: 12, bottom: 24, left: 50 };
  const w = width - m.left - m.right;
  const h = height - m.top - m.bottom;
  const hz = residuals.map((r) => r.hz);
  const lo = Math.min(10, ...hz);
  const hi = Math.max(30_000, ...hz);
  const x = scaleLog().domain([lo, hi]).range([0, w]);
  const peak = Math.max(0.1, ...residuals.map((r) => Math.abs(r.residualDb)));
  const y = scaleLinear()
    .domain([-peak * 1.15, peak * 1.15])
    .range([h, 0])
    .nice(4);
  const ticks = [10, 20, 50, 100, 200, 500, 1000, 2000, 5000, 10_000, 20_000].filter(
    (t) => t >= lo && t <= hi,
  );
  const digits = peak < 0.5 ? 2 : 1;
  return (
    <figure>
      <figcaption className="mb-1 text-xs font-medium text-ink-soft">{caption}</figcaption>
      <svg
        viewBox={`0 0 ${width} ${height}`}
        className="h-auto w-full"
        role="img"
        aria-label={`Residuals of the fit, RMS ${rmsDb.toFixed(3)} dB`}
        data-testid="fit-residual-plot"
      >
        <g transform={`translate(${m.left},${m.top})`}>
          <SmallPlotGrid x={x} y={y} width={w} height={h} frequencyTicks={ticks} digits={digits} />
          {residuals.map((r, i) => (
            <g key={i}>
              <line
                x1={x(r.hz)}
                x2={x(r.hz)}
                y1={y(0)}
                y2={y(r.residualDb)}
                stroke="#a9591a"
                strokeWidth={1.5}
              />
              <circle cx={x(r.hz)} cy={y(r.residualDb)} r={3} fill="#a9591a" />
            </g>
          ))}
        </g>
      </svg>
    </figure>
  );
}
