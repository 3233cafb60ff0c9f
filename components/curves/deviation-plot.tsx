"use client";
/**
 * How far the digital filters stray from the analog curve at one sample rate: the
 * access-copy render filter (the FIR the render job builds, at the transfer's rate) and
 * the listening preview's IIR sections (what the bench plays candidates through). Gain
 * difference in dB and phase difference in degrees, 20 Hz–20 kHz, both filters on each
 * plot, with each one's worst values printed beside its name.
 */
import { scaleLinear, scaleLog } from "d3-scale";
import { useFilterDeviation } from "@/hooks/use-filter-deviation";
import { type CurveSpec, DEVIATION_HIGH_HZ, DEVIATION_LOW_HZ, type DeviationTrace } from "@/lib/curves";
import { cx } from "@/components/ui/cx";
import { formatHz, formatSigned } from "./plot-format";
import { SmallPlotGrid } from "./small-plot-grid";

const TICKS = [20, 50, 100, 200, 500, 1000, 2000, 5000, 10_000, 20_000];
const FIR_COLOR = "#2f6f6a";
const IIR_COLOR = "#a9591a";

interface Series {
  hz: number[];
  values: number[];
  color: string;
  dashed?: boolean;
  width?: number;
}

function MiniPlot({
  series,
  unit,
  floor,
  title,
  width = 420,
  height = 160,
}: {
  series: Series[];
  unit: string;
  floor: number;
  title: string;
  width?: number;
  height?: number;
}) {
  const m = { top: 10, right: 12, bottom: 24, left: 58 };
  const w = width - m.left - m.right;
  const h = height - m.top - m.bottom;
  const x = scaleLog().domain([DEVIATION_LOW_HZ, DEVIATION_HIGH_HZ]).range([0, w]);
  const peak = Math.max(floor, ...series.flatMap((s) => s.values.map(Math.abs).filter(Number.isFinite)));
  const y = scaleLinear()
    .domain([-peak * 1.1, peak * 1.1])
    .range([h, 0])
    .nice(4);
  const digits = peak < 0.005 ? 4 : peak < 0.05 ? 3 : peak < 1 ? 2 : 0;
  return (
    <svg viewBox={`0 0 ${width} ${height}`} className="h-auto w-full" role="img" aria-label={title}>
      <g transform={`translate(${m.left},${m.top})`}>
        <SmallPlotGrid
          x={x}
          y={y}
          width={w}
          height={h}
          frequencyTicks={TICKS}
          digits={digits}
          unit={unit}
          strongHz={[100, 1000, 10_000]}
        />
        {series.map((s, k) => (
          <path
            key={k}
            d={s.hz.map((f, i) => `${i ? "L" : "M"}${x(f).toFixed(1)},${y(s.values[i]).toFixed(1)}`).join("")}
            fill="none"
            stroke={s.color}
            strokeWidth={s.width ?? 1.75}
            strokeDasharray={s.dashed ? "5 3" : undefined}
          />
        ))}
      </g>
    </svg>
  );
}

/** A worst value in a readable form: tiny FIR errors in scientific notation, the rest to fixed digits. */
function worst(value: number, digits: number): string {
  if (Math.abs(value) > 0 && Math.abs(value) < 10 ** -digits) {
    const [m, e] = Math.abs(value).toExponential(1).split("e");
    return `${value < 0 ? "−" : "+"}${m}×10${superscript(Number(e))}`;
  }
  return formatSigned(value, digits);
}

function superscript(n: number): string {
  const map: Record<string, string> = {
    "-": "⁻",
    "0": "⁰",
    "1": "¹",
    "2": "²",
    "3": "³",
    "4": "⁴",
    "5": "⁵",
    "6": "⁶",
    "7": "⁷",
    "8": "⁸",
    "9": "⁹",
  };
  return String(n)
    .split("")
    .map((c) => map[c] ?? c)
    .join("");
}

function FilterRow({
  testId,
  color,
  dashed,
  name,
  role,
  t,
}: {
  testId: string;
  color: string;
  dashed?: boolean;
  name: string;
  role: string;
  t: DeviationTrace;
}) {
  return (
    <div
      className="grid gap-x-4 gap-y-1 rounded-md bg-paper-deep/60 px-3 py-2 sm:grid-cols-[minmax(0,1.4fr)_minmax(0,1fr)_minmax(0,1fr)]"
      data-testid={testId}
    >
      <div className="min-w-0">
        <p className="flex items-center gap-2 text-sm font-semibold">
          <svg aria-hidden width="22" height="6" className="shrink-0">
            <line
              x1="0"
              x2="22"
              y1="3"
              y2="3"
              stroke={color}
              strokeWidth="2.5"
              strokeDasharray={dashed ? "5 3" : undefined}
            />
          </svg>
          <span data-testid={`${testId}-name`}>{name}</span>
        </p>
        <p className="text-xs text-ink-faint">{role}</p>
      </div>
      <div>
        <p className="text-xs text-ink-soft">Worst gain difference</p>
        <p className="font-mono text-sm font-semibold" data-testid={`${testId}-worst-db`}>
          {worst(t.worstDb, 3)} dB{" "}
          <span className="font-normal text-ink-faint">at {formatHz(t.worstDbHz)}</span>
        </p>
      </div>
      <div>
        <p className="text-xs text-ink-soft">Worst phase difference</p>
        <p className="font-mono text-sm font-semibold" data-testid={`${testId}-worst-deg`}>
          {worst(t.worstDeg, 1)}°{" "}
          <span className="font-normal text-ink-faint">at {formatHz(t.worstDegHz)}</span>
        </p>
      </div>
    </div>
  );
}

export function DeviationPlot({ spec, sampleRateHz }: { spec: CurveSpec; sampleRateHz: number }) {
  const { result: dev, error, pending, ms, where } = useFilterDeviation(spec, sampleRateHz);

  if (error && !pending)
    return <p className="text-sm text-alarm">The digital filters cannot be built: {error}</p>;
  if (!dev)
    return (
      <p className="text-sm text-ink-faint" data-testid="deviation-pending">
        Working out the access-copy filter and the listening preview&apos;s sections…
      </p>
    );
  const rate = `${(dev.sampleRateHz / 1000).toFixed(1)} kHz`;
  const firName = `Access-copy filter (FIR, ${dev.fir.taps.toLocaleString("en-GB")} taps)`;
  const iirName = `Listening preview (IIR, ${dev.iir.sections} second-order section${dev.iir.sections === 1 ? "" : "s"})`;
  const series = (key: "gainDb" | "phaseDeg"): Series[] => [
    { hz: dev.iir.hz, values: dev.iir[key], color: IIR_COLOR, dashed: true },
    { hz: dev.fir.hz, values: dev.fir[key], color: FIR_COLOR, width: 2.25 },
  ];
  return (
    <div
      className={cx("space-y-3 transition-opacity", pending && "opacity-60")}
      data-testid="deviation-plot"
      data-pending={pending ? "true" : "false"}
      data-compute-ms={ms !== null ? Math.round(ms) : undefined}
      data-computed-in={where ?? undefined}
      aria-busy={pending}
    >
      <div className="space-y-2">
        <FilterRow
          testId="deviation-fir"
          color={FIR_COLOR}
          name={firName}
          role={`Renders the access copies at the transfer's rate (${rate}); its ${dev.fir.delaySamples}-sample delay is taken out.`}
          t={dev.fir}
        />
        <FilterRow
          testId="deviation-iir"
          color={IIR_COLOR}
          dashed
          name={iirName}
          role="Plays the candidate curves when you listen on the bench; nothing is made with it."
          t={dev.iir}
        />
      </div>
      <div className="grid gap-3 md:grid-cols-2">
        <div>
          <p className="mb-1 text-xs font-medium text-ink-soft">Gain, digital − analog (dB)</p>
          <MiniPlot
            series={series("gainDb")}
            unit=""
            floor={0.001}
            title={
              `Gain difference from the analog curve: access-copy filter worst ${dev.fir.worstDb.toExponential(1)} ` +
              `dB, listening preview worst ${dev.iir.worstDb.toFixed(3)} dB`
            }
          />
        </div>
        <div>
          <p className="mb-1 text-xs font-medium text-ink-soft">Phase, digital − analog (degrees)</p>
          <MiniPlot
            series={series("phaseDeg")}
            unit="°"
            floor={0.1}
            title={
              `Phase difference from the analog curve: access-copy filter worst ${dev.fir.worstDeg.toExponential(1)} ` +
              `degrees, listening preview worst ${dev.iir.worstDeg.toFixed(1)} degrees`
            }
          />
        </div>
      </div>
      <p className="text-xs text-ink-faint">
        Measured 20 Hz–20 kHz on the plotted points. The designers&apos; own dense checks: access-copy filter
        at most {worst(dev.fir.reportedDb, 3).replace(/^\+/, "")} dB and{" "}
        {worst(dev.fir.reportedDeg, 1).replace(/^\+/, "")}° (every FFT bin); listening preview at most{" "}
        {dev.iir.reportedDb.toFixed(4)} dB and {dev.iir.reportedDeg.toFixed(1)}°. The preview&apos;s sections
        are minimum-phase and cannot follow the analog phase near half the sample rate; the access copies are
        made with the FIR, which follows gain and phase.
      </p>
    </div>
  );
}
