import { formatHzTick, formatSigned } from "./plot-format";

/**
 * The frame, frequency gridlines and value ticks of the small log-frequency plots (the
 * filter's deviation, the fit's residuals): drawn inside an already translated <g>.
 */
export function SmallPlotGrid({
  x,
  y,
  width,
  height,
  frequencyTicks,
  digits,
  unit = "",
  strongHz = [],
}: {
  x: (hz: number) => number;
  y: { (v: number): number; ticks(count: number): number[] };
  width: number;
  height: number;
  frequencyTicks: number[];
  digits: number;
  unit?: string;
  strongHz?: number[];
}) {
  return (
    <>
      <rect width={width} height={height} fill="#fffdf8" stroke="#d9d1bf" />
      {frequencyTicks.map((t) => (
        <g key={t}>
          <line x1={x(t)} x2={x(t)} y2={height} stroke={strongHz.includes(t) ? "#d3cab5" : "#eee8da"} />
          <text
            x={x(t)}
            y={height + 15}
            textAnchor="middle"
            fontSize={10.5}
            fill="#4a5459"
            className="font-mono"
          >
            {formatHzTick(t)}
          </text>
        </g>
      ))}
      {y.ticks(4).map((t) => (
        <g key={t} transform={`translate(0,${y(t)})`}>
          <line x2={width} stroke={t === 0 ? "#9aa1a3" : "#eee8da"} />
          <text x={-6} dy="0.32em" textAnchor="end" fontSize={10.5} fill="#737c80" className="font-mono">
            {formatSigned(t, digits)}
            {unit}
          </text>
        </g>
      ))}
    </>
  );
}
