"use client";
/**
 * Averaged spectrum of the listening window: the flat transfer and each candidate
 * after equalization, on log frequency. Hum lines, rumble below 30 Hz and the hiss
 * of the surface show where each curve puts them.
 */
import { scaleLinear, scaleLog } from "d3-scale";
import { useMemo } from "react";
import { CURVE_COLORS, formatHzTick } from "@/components/curves/plot-format";
import type { Spectrum } from "@/lib/audition/spectrum";

export interface SpectrumLine {
  id: string;
  label: string;
  spectrum: Spectrum;
  color: string;
}

const TICKS = [20, 50, 100, 200, 500, 1000, 2000, 5000, 10_000, 20_000];
const W = 760;
const H = 280;
const M = { top: 12, right: 16, bottom: 30, left: 48 };

export function SpectrumPlot({ lines, activeId }: { lines: SpectrumLine[]; activeId: string }) {
  const { x, y, yTicks, paths } = useMemo(() => {
    const all = lines.flatMap((l) => Array.from(l.spectrum.db));
    const top = Math.ceil((Math.max(-200, ...all) + 6) / 10) * 10;
    const bottom = top - 100;
    const hzs = lines[0]?.spectrum.hz;
    const x = scaleLog()
      .domain([hzs?.[0] ?? 20, hzs?.[hzs.length - 1] ?? 20_000])
      .range([0, W - M.left - M.right]);
    const y = scaleLinear()
      .domain([bottom, top])
      .range([H - M.top - M.bottom, 0])
      .clamp(true);
    const yTicks: number[] = [];
    for (let t = bottom; t <= top; t += 20) yTicks.push(t);
    const paths = lines.map((l) =>
      Array.from(
        l.spectrum.db,
        (d, i) => `${i ? "L" : "M"}${x(l.spectrum.hz[i]).toFixed(1)},${y(d).toFixed(1)}`,
      ).join(""),
    );
    return { x, y, yTicks, paths };
  }, [lines]);

  if (!lines.length) return null;
  const innerW = W - M.left - M.right;
  const innerH = H - M.top - M.bottom;
  const order = lines
    .map((l, i) => i)
    .sort((a, b) => Number(lines[a].id === activeId) - Number(lines[b].id === activeId));
  return (
    <figure className="space-y-2" data-testid="spectrum-plot">
      <figcaption className="flex flex-wrap gap-x-4 gap-y-1 text-xs">
        {lines.map((l) => (
          <span key={l.id} className="inline-flex items-center gap-1.5">
            <span
              aria-hidden
              className="inline-block h-0.5 w-5 rounded"
              style={{ background: l.color, height: l.id === activeId ? 3 : 2 }}
            />
            <span className={l.id === activeId ? "font-semibold" : "text-ink-soft"}>{l.label}</span>
          </span>
        ))}
      </figcaption>
      <svg
        viewBox={`0 0 ${W} ${H}`}
        className="block h-auto w-full font-sans"
        role="img"
        aria-label={
          `Averaged spectrum of the listening window, flat and through ${lines.length - 1} ` +
          `curve${lines.length === 2 ? "" : "s"}, in dB against frequency.`
        }
      >
        <g transform={`translate(${M.left},${M.top})`}>
          <rect width={innerW} height={innerH} fill="#fffdf8" stroke="#d9d1bf" />
          {TICKS.filter((t) => t >= x.domain()[0] && t <= x.domain()[1]).map((t) => (
            <g key={t} transform={`translate(${x(t)},0)`}>
              <line y2={innerH} stroke="#eee8da" />
              <text y={innerH + 17} textAnchor="middle" fontSize={11} fill="#4a5459" className="font-mono">
                {formatHzTick(t)}
              </text>
            </g>
          ))}
          {[50, 60].map((hz) => (
            <line
              key={hz}
              x1={x(hz)}
              x2={x(hz)}
              y2={innerH}
              stroke="#a9591a"
              strokeOpacity={0.25}
              strokeDasharray="2 3"
            />
          ))}
          {yTicks.map((t) => (
            <g key={t} transform={`translate(0,${y(t)})`}>
              <line x2={innerW} stroke="#e6dfcf" />
              <text x={-6} dy="0.32em" textAnchor="end" fontSize={11} fill="#737c80" className="font-mono">
                {t}
              </text>
            </g>
          ))}
          <text
            transform={`translate(-38,${innerH / 2}) rotate(-90)`}
            textAnchor="middle"
            fontSize={11}
            fill="#1d2327"
            fontWeight={600}
          >
            dB (full-scale sine = 0)
          </text>
          {order.map((i) => (
            <path
              key={lines[i].id}
              d={paths[i]}
              fill="none"
              stroke={lines[i].color}
              strokeWidth={lines[i].id === activeId ? 2.4 : 1.2}
              strokeOpacity={lines[i].id === activeId ? 1 : 0.55}
              data-testid={`spectrum-line-${lines[i].id}`}
            />
          ))}
        </g>
      </svg>
      <p className="text-xs text-ink-faint">
        Dotted lines mark 50 and 60 Hz, where mains hum sits. Each curve is levelled to the flat line at 1
        kHz, as in the player.
      </p>
    </figure>
  );
}

export const FLAT_COLOR = "#737c80";
export const candidateColor = (i: number) => CURVE_COLORS[i % CURVE_COLORS.length];
