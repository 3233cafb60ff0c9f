"use client";
/**
 * Magnitude and phase of up to four playback curves on a log-frequency axis
 * (10 Hz–30 kHz), with the straight-line approximation of the first curve and
 * optional (Hz, dB) points. Pure SVG on d3-scale; every number comes from
 * lib/curves so the plot shows exactly what the filter will be built from.
 */
import { scaleLinear, scaleLog } from "d3-scale";
import { type PointerEvent, useEffect, useId, useMemo, useRef, useState } from "react";
import {
  type AnalogModel,
  analogGainDb,
  analogModel,
  analogPhaseRad,
  analogResponse,
  type Asymptotes,
  type CurveSpec,
  describeCurve,
  logGrid,
} from "@/lib/curves";
import { CORNER_WORDS, CURVE_COLORS, formatDb, formatHz, formatHzTick, formatSigned } from "./plot-format";

export interface PlotCurve {
  label: string;
  spec: CurveSpec;
  color?: string;
}

export interface PlotPoint {
  hz: number;
  db: number;
}

export const PLOT_LOW_HZ = 10;
export const PLOT_HIGH_HZ = 30_000;
const GRID_POINTS = 420;
/** Above this span the lowest part of the magnitude axis is cut off: a high-pass falling to −∞ would squash the rest. */
const MAX_DB_SPAN = 84;

const LABEL_TICKS = [10, 20, 50, 100, 200, 500, 1000, 2000, 5000, 10_000, 20_000];
const MINOR_TICKS = (() => {
  const out: number[] = [];
  for (let decade = 10; decade <= 10_000; decade *= 10)
    for (let m = 1; m <= 9; m++) if (decade * m <= PLOT_HIGH_HZ) out.push(decade * m);
  out.push(20_000, 30_000);
  return Array.from(new Set(out));
})();

interface DrawnCurve {
  label: string;
  color: string;
  model: AnalogModel | null;
  error: string | null;
  gainDb: number[];
  phaseDeg: number[];
  peakGainDb: number | null;
  peakHz: number | null;
  asymptotes: Asymptotes | null;
}

function useWidth(fallback: number): [React.RefObject<HTMLDivElement | null>, number] {
  const ref = useRef<HTMLDivElement | null>(null);
  const [width, setWidth] = useState(fallback);
  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    const measure = () => setWidth(Math.max(320, Math.floor(el.getBoundingClientRect().width)));
    measure();
    const ro = new ResizeObserver(measure);
    ro.observe(el);
    return () => ro.disconnect();
  }, []);
  return [ref, width];
}

export function ResponsePlot({
  curves,
  points,
  pointsLabel = "Points",
  showAsymptotes = true,
  showPhase = true,
  height = 480,
  testId = "response-plot",
}: {
  curves: PlotCurve[];
  points?: PlotPoint[] | null;
  pointsLabel?: string;
  showAsymptotes?: boolean;
  showPhase?: boolean;
  height?: number;
  testId?: string;
}) {
  const [wrapRef, width] = useWidth(880);
  const uid = useId().replace(/[^a-zA-Z0-9_-]/g, "");
  const [hoverHz, setHoverHz] = useState<number | null>(null);

  const grid = useMemo(() => Array.from(logGrid(PLOT_LOW_HZ, PLOT_HIGH_HZ, GRID_POINTS)), []);

  const drawn: DrawnCurve[] = useMemo(
    () =>
      curves.slice(0, 4).map((c, i) => {
        const color = c.color ?? CURVE_COLORS[i % CURVE_COLORS.length];
        try {
          const model = analogModel(c.spec);
          const r = analogResponse(model, grid);
          const d = describeCurve(c.spec);
          return {
            label: c.label,
            color,
            model,
            error: null,
            gainDb: r.gainDb,
            phaseDeg: r.phaseDeg,
            peakGainDb: d.peakGainDb,
            peakHz: d.peakHz,
            asymptotes: d.asymptotes,
          };
        } catch (err) {
          return {
            label: c.label,
            color,
            model: null,
            error: err instanceof Error ? err.message : String(err),
            gainDb: [],
            phaseDeg: [],
            peakGainDb: null,
            peakHz: null,
            asymptotes: null,
          };
        }
      }),
    [curves, grid],
  );

  // Straight-line approximation of the first curve, rebuilt from its corners and segment slopes.
  const asym = useMemo(() => {
    const a = showAsymptotes ? drawn[0]?.asymptotes : null;
    if (!a || a.corners.length === 0) return null;
    const { corners, segments } = a;
    const levelAt = (hz: number): number => {
      // Segment i ends at corner i; segment i+1 starts there.
      const k = corners.findIndex((c) => hz <= c.hz);
      if (k === -1) {
        const last = corners[corners.length - 1];
        return (
          last.asymptoteGainDb + segments[segments.length - 1].slopeDbPerDecade * Math.log10(hz / last.hz)
        );
      }
      const c = corners[k];
      return c.asymptoteGainDb + segments[k].slopeDbPerDecade * Math.log10(hz / c.hz);
    };
    const xs = [
      PLOT_LOW_HZ,
      ...corners.map((c) => c.hz).filter((hz) => hz > PLOT_LOW_HZ && hz < PLOT_HIGH_HZ),
      PLOT_HIGH_HZ,
    ];
    return { corners, segments, line: xs.map((hz) => ({ hz, db: levelAt(hz) })), levelAt };
  }, [showAsymptotes, drawn]);

  const phasePanel = showPhase ? Math.round(height * 0.3) : 0;
  const gap = showPhase ? 30 : 0;
  const margin = { top: 14, right: 18, bottom: 30, left: 58 };
  const magHeight = height - phasePanel - gap - margin.top - margin.bottom;
  const innerW = width - margin.left - margin.right;
  const magTop = margin.top;
  const phaseTop = magTop + magHeight + gap;

  const x = useMemo(() => scaleLog().domain([PLOT_LOW_HZ, PLOT_HIGH_HZ]).range([0, innerW]), [innerW]);

  const yMag = useMemo(() => {
    const values: number[] = [];
    for (const c of drawn) for (const v of c.gainDb) if (Number.isFinite(v)) values.push(v);
    for (const p of points ?? []) if (Number.isFinite(p.db)) values.push(p.db);
    for (const c of asym?.corners ?? []) values.push(c.asymptoteGainDb);
    let lo = values.length ? Math.min(...values) : -20;
    let hi = values.length ? Math.max(...values) : 20;
    if (hi - lo > MAX_DB_SPAN) lo = hi - MAX_DB_SPAN;
    if (hi - lo < 12) {
      const mid = (hi + lo) / 2;
      lo = mid - 6;
      hi = mid + 6;
    }
    // Headroom above the highest corner so its label fits inside the plot.
    return scaleLinear()
      .domain([lo - 2, hi + (asym ? 7 : 2)])
      .range([magHeight, 0])
      .nice(8);
  }, [drawn, points, asym, magHeight]);

  const yPhase = useMemo(() => {
    const values: number[] = [];
    for (const c of drawn) for (const v of c.phaseDeg) if (Number.isFinite(v)) values.push(v);
    const lo = values.length ? Math.min(...values, -10) : -90;
    const hi = values.length ? Math.max(...values, 10) : 90;
    return scaleLinear()
      .domain([lo - 5, hi + 5])
      .range([phasePanel, 0])
      .nice(5);
  }, [drawn, phasePanel]);

  const path = (ys: number[], scale: (v: number) => number) => {
    let d = "";
    let pen = false;
    for (let i = 0; i < grid.length; i++) {
      const v = ys[i];
      if (!Number.isFinite(v)) {
        pen = false;
        continue;
      }
      d += `${pen ? "L" : "M"}${x(grid[i]).toFixed(1)},${scale(v).toFixed(1)}`;
      pen = true;
    }
    return d;
  };

  const onMove = (e: PointerEvent<SVGRectElement>) => {
    const rect = e.currentTarget.getBoundingClientRect();
    const px = ((e.clientX - rect.left) / rect.width) * innerW;
    setHoverHz(x.invert(Math.min(innerW, Math.max(0, px))));
  };

  const summary = drawn
    .map((c) =>
      c.error
        ? `${c.label}: cannot be drawn (${c.error})`
        : `${c.label}: peak ${formatDb(c.peakGainDb ?? NaN)} at ${formatHz(c.peakHz ?? NaN)}`,
    )
    .join("; ");

  const clipMag = `clip-mag-${uid}`;
  const clipPhase = `clip-phase-${uid}`;
  const ink = "#1d2327";
  const faint = "#737c80";

  return (
    <figure className="space-y-2" data-testid={testId}>
      <figcaption
        className="flex flex-wrap items-center gap-x-5 gap-y-1 text-sm"
        data-testid={`${testId}-legend`}
      >
        {drawn.map((c, i) => (
          <span key={`${c.label}-${i}`} className="inline-flex items-center gap-2">
            <svg width="22" height="10" aria-hidden>
              <line x1="0" x2="22" y1="5" y2="5" stroke={c.color} strokeWidth={i === 0 ? 3 : 2.25} />
            </svg>
            <span className={i === 0 ? "font-semibold" : ""}>{c.label}</span>
            {c.error ? (
              <span className="text-xs text-alarm">cannot be drawn</span>
            ) : (
              <span className="font-mono text-xs text-ink-faint">
                peak {formatDb(c.peakGainDb ?? NaN)} @ {formatHz(c.peakHz ?? NaN)}
              </span>
            )}
          </span>
        ))}
        {asym ? (
          <span className="inline-flex items-center gap-2 text-ink-soft">
            <svg width="22" height="10" aria-hidden>
              <line
                x1="0"
                x2="22"
                y1="5"
                y2="5"
                stroke={drawn[0]?.color}
                strokeWidth="1.5"
                strokeDasharray="5 3"
              />
            </svg>
            straight-line approximation
          </span>
        ) : null}
        {points?.length ? (
          <span className="inline-flex items-center gap-2 text-ink-soft">
            <svg width="12" height="12" aria-hidden>
              <rect
                x="2"
                y="2"
                width="8"
                height="8"
                fill="white"
                stroke={ink}
                strokeWidth="1.5"
                transform="rotate(45 6 6)"
              />
            </svg>
            {pointsLabel}
          </span>
        ) : null}
      </figcaption>
      <div ref={wrapRef} className="relative w-full">
        <svg
          width={width}
          height={height}
          role="img"
          aria-label={`Frequency response, 10 Hz to 30 kHz. ${summary}`}
          className="block select-none font-sans"
        >
          <defs>
            <clipPath id={clipMag}>
              <rect x={0} y={0} width={innerW} height={magHeight} />
            </clipPath>
            <clipPath id={clipPhase}>
              <rect x={0} y={0} width={innerW} height={phasePanel} />
            </clipPath>
          </defs>

          {/* Magnitude panel */}
          <g transform={`translate(${margin.left},${magTop})`}>
            <rect width={innerW} height={magHeight} fill="#fffdf8" stroke="#d9d1bf" />
            <FrequencyGrid x={x} height={magHeight} />
            <ValueAxis ticks={yMag.ticks(8)} y={yMag} width={innerW} height={magHeight} title="Gain (dB)" />
            <g clipPath={`url(#${clipMag})`}>
              {asym ? (
                <path
                  d={asym.line
                    .map((p, i) => `${i ? "L" : "M"}${x(p.hz).toFixed(1)},${yMag(p.db).toFixed(1)}`)
                    .join("")}
                  fill="none"
                  stroke={drawn[0].color}
                  strokeOpacity={0.75}
                  strokeWidth={1.5}
                  strokeDasharray="6 4"
                  data-testid={`${testId}-asymptotes`}
                />
              ) : null}
              {drawn
                .map((c, i) => ({ c, i }))
                .reverse()
                .map(({ c, i }) =>
                  c.model ? (
                    <path
                      key={i}
                      d={path(c.gainDb, yMag)}
                      fill="none"
                      stroke={c.color}
                      strokeWidth={i === 0 ? 2.75 : 2}
                      strokeLinejoin="round"
                      data-testid={`${testId}-curve-${i}`}
                    />
                  ) : null,
                )}
              {(points ?? []).map((p, i) =>
                p.hz >= PLOT_LOW_HZ && p.hz <= PLOT_HIGH_HZ ? (
                  <rect
                    key={i}
                    x={x(p.hz) - 4}
                    y={yMag(p.db) - 4}
                    width={8}
                    height={8}
                    fill="white"
                    stroke={ink}
                    strokeWidth={1.5}
                    transform={`rotate(45 ${x(p.hz)} ${yMag(p.db)})`}
                  />
                ) : null,
              )}
            </g>
            {asym ? (
              <AsymptoteLabels
                asym={asym}
                x={x}
                y={yMag}
                width={innerW}
                height={magHeight}
                color={drawn[0].color}
              />
            ) : null}
            {hoverHz !== null ? (
              <HoverReadout hz={hoverHz} x={x} y={yMag} height={magHeight} width={innerW} curves={drawn} />
            ) : null}
            <rect
              width={innerW}
              height={magHeight}
              fill="transparent"
              onPointerMove={onMove}
              onPointerLeave={() => setHoverHz(null)}
            />
            {!showPhase ? <FrequencyAxis x={x} top={magHeight} /> : null}
          </g>

          {/* Phase panel */}
          {showPhase ? (
            <g transform={`translate(${margin.left},${phaseTop})`}>
              <rect width={innerW} height={phasePanel} fill="#fffdf8" stroke="#d9d1bf" />
              <FrequencyGrid x={x} height={phasePanel} />
              <ValueAxis
                ticks={yPhase.ticks(4)}
                y={yPhase}
                width={innerW}
                height={phasePanel}
                unit="°"
                title="Phase"
              />
              <g clipPath={`url(#${clipPhase})`}>
                {drawn
                  .map((c, i) => ({ c, i }))
                  .reverse()
                  .map(({ c, i }) =>
                    c.model ? (
                      <path
                        key={i}
                        d={path(c.phaseDeg, yPhase)}
                        fill="none"
                        stroke={c.color}
                        strokeWidth={i === 0 ? 2.25 : 1.75}
                      />
                    ) : null,
                  )}
              </g>
              {hoverHz !== null ? (
                <line x1={x(hoverHz)} x2={x(hoverHz)} y2={phasePanel} stroke={faint} strokeDasharray="2 3" />
              ) : null}
              <FrequencyAxis x={x} top={phasePanel} />
            </g>
          ) : null}
        </svg>
      </div>
    </figure>
  );
}

/** A panel's horizontal gridlines with their values (0 drawn stronger), and the panel's title beside them. */
function ValueAxis({
  ticks,
  y,
  width,
  height,
  unit = "",
  title,
}: {
  ticks: number[];
  y: (v: number) => number;
  width: number;
  height: number;
  unit?: string;
  title: string;
}) {
  return (
    <>
      {ticks.map((t) => (
        <g key={t} transform={`translate(0,${y(t)})`}>
          <line x2={width} stroke={t === 0 ? "#9aa1a3" : "#e6dfcf"} strokeWidth={t === 0 ? 1.2 : 1} />
          <text x={-8} dy="0.32em" textAnchor="end" fontSize={11.5} fill="#737c80" className="font-mono">
            {formatSigned(t, 0)}
            {unit}
          </text>
        </g>
      ))}
      <text
        transform={`translate(${-44},${height / 2}) rotate(-90)`}
        textAnchor="middle"
        fontSize={12}
        fill="#1d2327"
        fontWeight={600}
      >
        {title}
      </text>
    </>
  );
}

function FrequencyGrid({ x, height }: { x: (hz: number) => number; height: number }) {
  return (
    <g aria-hidden>
      {MINOR_TICKS.map((hz) => {
        const decade = Math.abs(Math.log10(hz) - Math.round(Math.log10(hz))) < 1e-9;
        return (
          <line
            key={hz}
            x1={x(hz)}
            x2={x(hz)}
            y2={height}
            stroke={decade ? "#d3cab5" : "#eee8da"}
            strokeWidth={decade ? 1.2 : 1}
          />
        );
      })}
    </g>
  );
}

function FrequencyAxis({ x, top }: { x: (hz: number) => number; top: number }) {
  return (
    <g transform={`translate(0,${top})`} aria-hidden>
      {LABEL_TICKS.map((hz) => (
        <text
          key={hz}
          x={x(hz)}
          y={17}
          textAnchor="middle"
          fontSize={11.5}
          fill="#4a5459"
          className="font-mono"
        >
          {formatHzTick(hz)}
        </text>
      ))}
      <text x={x(PLOT_HIGH_HZ)} y={17} textAnchor="end" fontSize={11.5} fill="#4a5459" fontWeight={600}>
        Hz
      </text>
    </g>
  );
}

type AsymptoteData = Asymptotes & { levelAt: (hz: number) => number };

interface Box {
  x0: number;
  x1: number;
  y0: number;
  y1: number;
}
const overlaps = (a: Box, b: Box) => a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1;

/**
 * Corner markers with name and frequency, and each straight segment's slope written along it.
 * Labels are placed greedily: the free side of the corner first, then the other side, then further out,
 * so neighbouring corners (a high-pass next to a shelf) do not print over each other.
 */
function AsymptoteLabels({
  asym,
  x,
  y,
  width,
  height,
  color,
}: {
  asym: AsymptoteData;
  x: (hz: number) => number;
  y: (db: number) => number;
  width: number;
  height: number;
  color: string;
}) {
  const halo = {
    paintOrder: "stroke" as const,
    stroke: "#fffdf8",
    strokeWidth: 4,
    strokeLinejoin: "round" as const,
  };
  const inside = (hz: number) => hz >= PLOT_LOW_HZ && hz <= PLOT_HIGH_HZ;

  const placed: Box[] = [];
  const cornerLabels = [...asym.corners]
    .filter((c) => inside(c.hz))
    .sort((a, b) => a.hz - b.hz)
    .flatMap((c) => {
      const cx = x(c.hz);
      const cy = y(c.asymptoteGainDb);
      if (cy < 0 || cy > height) return [];
      placed.push({ x0: cx - 6, x1: cx + 6, y0: cy - 6, y1: cy + 6 });
      const name = CORNER_WORDS[c.parameter];
      const freq = formatHz(c.hz);
      const w = Math.max(name.length * 6.6, freq.length * 6.9) + 6;
      const anchor: "start" | "middle" | "end" =
        cx < w / 2 + 4 ? "start" : cx > width - w / 2 - 4 ? "end" : "middle";
      const bx0 = anchor === "start" ? cx - 2 : anchor === "end" ? cx - w + 2 : cx - w / 2;
      // The real curve passes 3 dB below a pole's corner and 3 dB above a zero's: the label goes on the free side first.
      const prefersAbove = c.slopeChangeDbPerDecade < 0;
      const tries = prefersAbove ? [-1, 1, -2, 2, -3, 3] : [1, -1, 2, -2, 3, -3];
      let chosen: { ty: number; box: Box; above: boolean } | null = null;
      for (const t of tries) {
        const above = t < 0;
        const step = Math.abs(t) - 1;
        const ty = above ? cy - 26 - step * 30 : cy + 22 + step * 30;
        const box = { x0: bx0, x1: bx0 + w, y0: ty - 12, y1: ty + 17 };
        if (box.y0 < -4 || box.y1 > height + 4) continue;
        if (placed.some((b) => overlaps(b, box))) continue;
        chosen = { ty, box, above };
        break;
      }
      if (!chosen) {
        const ty = prefersAbove ? cy - 26 : cy + 22;
        chosen = { ty, box: { x0: bx0, x1: bx0 + w, y0: ty - 12, y1: ty + 17 }, above: prefersAbove };
      }
      placed.push(chosen.box);
      return [{ c, cx, cy, anchor, ...chosen }];
    });

  const slopeLabels = asym.segments.flatMap((s, i) => {
    const from = Math.max(PLOT_LOW_HZ, s.fromHz ?? PLOT_LOW_HZ);
    const to = Math.min(PLOT_HIGH_HZ, s.toHz ?? PLOT_HIGH_HZ);
    if (!(to > from) || x(to) - x(from) < 80) return [];
    const mid = Math.sqrt(from * to);
    const x0 = x(from);
    const x1 = x(to);
    const y0 = y(asym.levelAt(from));
    const y1 = y(asym.levelAt(to));
    const angle = (Math.atan2(y1 - y0, x1 - x0) * 180) / Math.PI;
    const cx = x(mid);
    const cy = y(asym.levelAt(mid));
    if (cy < 12 || cy > height - 12) return [];
    const text = `${formatSigned(s.slopeDbPerDecade, 0)} dB/decade`;
    const half = (text.length * 6.2) / 2;
    const rad = (angle * Math.PI) / 180;
    const dx = Math.abs(Math.cos(rad)) * half + 4;
    const dy = Math.abs(Math.sin(rad)) * half + 12;
    const box = { x0: cx - dx, x1: cx + dx, y0: cy - dy - 4, y1: cy + dy - 4 };
    if (placed.some((b) => overlaps(b, box))) return [];
    return [{ key: i, cx, cy, angle, text }];
  });

  return (
    <g data-testid="asymptote-labels">
      {slopeLabels.map((l) => (
        <text
          key={l.key}
          transform={`translate(${l.cx},${l.cy}) rotate(${l.angle})`}
          y={-7}
          textAnchor="middle"
          fontSize={11}
          fill={color}
          fontStyle="italic"
          style={halo}
        >
          {l.text}
        </text>
      ))}
      {cornerLabels.map(({ c, cx, cy, ty, above, anchor }) => (
        <g key={c.parameter} data-testid={`breakpoint-${c.parameter}`}>
          <line
            x1={cx}
            x2={cx}
            y1={above ? cy - 6 : cy + 6}
            y2={above ? ty + 18 : ty - 12}
            stroke={color}
            strokeWidth={1}
            strokeOpacity={0.7}
          />
          <circle cx={cx} cy={cy} r={4.5} fill="white" stroke={color} strokeWidth={2} />
          <text x={cx} y={ty} textAnchor={anchor} fontSize={11.5} fill="#1d2327" style={halo}>
            <tspan fontWeight={600}>{CORNER_WORDS[c.parameter]}</tspan>
            <tspan x={cx} dy="1.2em" className="font-mono" fontSize={11}>
              {formatHz(c.hz)}
            </tspan>
          </text>
        </g>
      ))}
    </g>
  );
}

function HoverReadout({
  hz,
  x,
  y,
  height,
  width,
  curves,
}: {
  hz: number;
  x: (hz: number) => number;
  y: (db: number) => number;
  height: number;
  width: number;
  curves: DrawnCurve[];
}) {
  const px = x(hz);
  const rows = curves
    .filter((c) => c.model)
    .map((c) => ({ c, db: analogGainDb(c.model!, hz), deg: (analogPhaseRad(c.model!, hz) * 180) / Math.PI }));
  const boxW = 210;
  const boxX = px + 12 + boxW > width ? px - 12 - boxW : px + 12;
  return (
    <g pointerEvents="none">
      <line x1={px} x2={px} y2={height} stroke="#737c80" strokeDasharray="2 3" />
      {rows.map(({ c, db }, i) => {
        const py = y(db);
        return py >= 0 && py <= height ? <circle key={i} cx={px} cy={py} r={3.5} fill={c.color} /> : null;
      })}
      <g transform={`translate(${boxX},${8})`}>
        <rect
          width={boxW}
          height={22 + rows.length * 17}
          rx={5}
          fill="white"
          fillOpacity={0.95}
          stroke="#d9d1bf"
        />
        <text x={10} y={16} fontSize={11.5} fontWeight={600} fill="#1d2327" className="font-mono">
          {formatHz(hz)}
        </text>
        {rows.map(({ c, db, deg }, i) => (
          <text key={i} x={10} y={33 + i * 17} fontSize={11} fill={c.color} className="font-mono">
            {formatDb(db, 2)} {formatSigned(deg, 1)}°{" "}
            {c.label.length > 12 ? `${c.label.slice(0, 11)}…` : c.label}
          </text>
        ))}
      </g>
    </g>
  );
}
