"use client";
/**
 * How far the digital correction filter (second-order sections at one sample
 * rate) strays from the analog curve: gain difference in dB and phase
 * difference in degrees, 20 Hz–20 kHz, with the worst values printed.
 */
import { scaleLinear, scaleLog } from "d3-scale";
import { useMemo } from "react";
import { analogModel, analogResponse, type CurveSpec, describeCurve, logGrid, sosResponse } from "@/lib/curves";
import { formatHz, formatSigned } from "./plot-format";
import { SmallPlotGrid } from "./small-plot-grid";

const LOW_HZ = 20;
const HIGH_HZ = 20_000;
const TICKS = [20, 50, 100, 200, 500, 1000, 2000, 5000, 10_000, 20_000];

function wrapDeg(deg: number): number {
  let d = deg % 360;
  if (d > 180) d -= 360;
  if (d <= -180) d += 360;
  return d;
}

interface Deviation {
  hz: number[];
  gainDb: number[];
  phaseDeg: number[];
  worstDb: number;
  worstDbHz: number;
  worstDeg: number;
  worstDegHz: number;
  sections: number;
  order: number;
  reportedDb: number;
  reportedDeg: number;
}

export function computeDeviation(spec: CurveSpec, sampleRateHz: number): Deviation {
  const d = describeCurve(spec, sampleRateHz);
  const iir = d.iir!;
  const hz = Array.from(logGrid(LOW_HZ, HIGH_HZ, 300));
  const analog = analogResponse(analogModel(spec), hz);
  const digital = sosResponse(iir.sos, hz, sampleRateHz);
  const gainDb = hz.map((_, i) => digital.gainDb[i] - analog.gainDb[i]);
  const phaseDeg = hz.map((_, i) => wrapDeg(digital.phaseDeg[i] - analog.phaseDeg[i]));
  let wi = 0;
  let pi = 0;
  for (let i = 1; i < hz.length; i++) {
    if (Math.abs(gainDb[i]) > Math.abs(gainDb[wi])) wi = i;
    if (Math.abs(phaseDeg[i]) > Math.abs(phaseDeg[pi])) pi = i;
  }
  return {
    hz,
    gainDb,
    phaseDeg,
    worstDb: gainDb[wi],
    worstDbHz: hz[wi],
    worstDeg: phaseDeg[pi],
    worstDegHz: hz[pi],
    sections: iir.sos.length,
    order: iir.order,
    reportedDb: iir.maxErrorDb,
    reportedDeg: iir.maxPhaseErrorDeg,
  };
}

function MiniPlot({ hz, values, unit, floor, color, title, width = 420, height = 150 }: { hz: number[]; values: number[]; unit: string; floor: number; color: string; title: string; width?: number; height?: number }) {
  const m = { top: 10, right: 12, bottom: 24, left: 54 };
  const w = width - m.left - m.right;
  const h = height - m.top - m.bottom;
  const x = scaleLog().domain([LOW_HZ, HIGH_HZ]).range([0, w]);
  const peak = Math.max(floor, ...values.map(Math.abs).filter(Number.isFinite));
  const y = scaleLinear().domain([-peak * 1.1, peak * 1.1]).range([h, 0]).nice(4);
  const d = hz.map((f, i) => `${i ? "L" : "M"}${x(f).toFixed(1)},${y(values[i]).toFixed(1)}`).join("");
  const digits = peak < 0.05 ? 3 : peak < 1 ? 2 : 0;
  return (
    <svg viewBox={`0 0 ${width} ${height}`} className="h-auto w-full" role="img" aria-label={title}>
      <g transform={`translate(${m.left},${m.top})`}>
        <SmallPlotGrid x={x} y={y} width={w} height={h} frequencyTicks={TICKS} digits={digits} unit={unit} strongHz={[100, 1000, 10_000]} />
        <path d={d} fill="none" stroke={color} strokeWidth={1.75} />
      </g>
    </svg>
  );
}

export function DeviationPlot({ spec, sampleRateHz }: { spec: CurveSpec; sampleRateHz: number }) {
  const result = useMemo(() => {
    try {
      return { ok: true as const, dev: computeDeviation(spec, sampleRateHz) };
    } catch (err) {
      return { ok: false as const, message: err instanceof Error ? err.message : String(err) };
    }
  }, [spec, sampleRateHz]);

  if (!result.ok) {
    return <p className="text-sm text-alarm">The digital filter cannot be built: {result.message}</p>;
  }
  const { dev } = result;
  return (
    <div className="space-y-3" data-testid="deviation-plot">
      <dl className="grid grid-cols-2 gap-3 text-sm sm:grid-cols-3">
        <div className="rounded-md bg-paper-deep/60 px-3 py-2">
          <dt className="text-xs text-ink-soft">Worst gain difference</dt>
          <dd className="font-mono font-semibold" data-testid="deviation-worst-db">
            {formatSigned(dev.worstDb, 3)} dB <span className="font-normal text-ink-faint">at {formatHz(dev.worstDbHz)}</span>
          </dd>
        </div>
        <div className="rounded-md bg-paper-deep/60 px-3 py-2">
          <dt className="text-xs text-ink-soft">Worst phase difference</dt>
          <dd className="font-mono font-semibold" data-testid="deviation-worst-deg">
            {formatSigned(dev.worstDeg, 1)}° <span className="font-normal text-ink-faint">at {formatHz(dev.worstDegHz)}</span>
          </dd>
        </div>
        <div className="rounded-md bg-paper-deep/60 px-3 py-2">
          <dt className="text-xs text-ink-soft">Filter</dt>
          <dd className="font-mono font-semibold">
            {dev.sections} section{dev.sections === 1 ? "" : "s"}, order {dev.order}
          </dd>
        </div>
      </dl>
      <div className="grid gap-3 md:grid-cols-2">
        <div>
          <p className="mb-1 text-xs font-medium text-ink-soft">Gain, digital − analog (dB)</p>
          <MiniPlot hz={dev.hz} values={dev.gainDb} unit="" floor={0.01} color="#2f6f6a" title={`Gain difference between the digital filter and the analog curve, worst ${dev.worstDb.toFixed(3)} dB`} />
        </div>
        <div>
          <p className="mb-1 text-xs font-medium text-ink-soft">Phase, digital − analog (degrees)</p>
          <MiniPlot hz={dev.hz} values={dev.phaseDeg} unit="°" floor={1} color="#a9591a" title={`Phase difference between the digital filter and the analog curve, worst ${dev.worstDeg.toFixed(1)} degrees`} />
        </div>
      </div>
      <p className="text-xs text-ink-faint">
        Measured 20 Hz–20 kHz. The filter designer&apos;s own dense check reports at most {dev.reportedDb.toFixed(4)} dB and {dev.reportedDeg.toFixed(1)}°. A phase difference near the top of the band
        is expected at lower sample rates: a digital filter cannot follow the analog phase all the way to half the sample rate.
      </p>
    </div>
  );
}
