"use client";
/**
 * What a fit of measured points is asked: whether the points are the recording
 * characteristic or the playback curve, and which values to fit. The curve workbench's
 * fit panel, the bench's test-disc measurement and a chain's calibration all ask it.
 */
import type { FitParameter } from "@/lib/curves";

/** A fitted value in words: the fit's choices and the tables of what it found. */
export const fitParameterLabels: Record<FitParameter, string> = {
  turnover: "Bass turnover",
  shelf: "Low-frequency shelf",
  rolloff: "Treble rolloff",
  highpass: "Rumble high-pass",
  ultrasonic: "Ultrasonic zero",
  levelOffset: "Level offset",
};

export type PointsKind = "recording" | "playback";

export function PointsKindChoice({
  name,
  value,
  onChange,
  words,
  testId,
}: {
  /** The radio group's name (unique on the page). */
  name: string;
  value: PointsKind;
  onChange: (kind: PointsKind) => void;
  /** What each kind means where it is asked. */
  words: Record<PointsKind, string>;
  testId?: (kind: PointsKind) => string;
}) {
  return (
    <div className="flex flex-wrap gap-4 text-sm">
      {(["recording", "playback"] as const).map((k) => (
        <label key={k} className="inline-flex items-center gap-2">
          <input
            type="radio"
            name={name}
            value={k}
            checked={value === k}
            onChange={() => onChange(k)}
            className="accent-[#2f6f6a]"
            data-testid={testId?.(k)}
          />
          {words[k]}
        </label>
      ))}
    </div>
  );
}

export function FitParameterChoice<P extends FitParameter>({
  parameters,
  value,
  onChange,
  className = "grid grid-cols-2 gap-x-4 gap-y-1 text-sm",
  testId,
}: {
  /** The values that may be fitted here, in order. */
  parameters: readonly P[];
  value: readonly P[];
  onChange: (fit: P[]) => void;
  className?: string;
  testId?: (p: P) => string;
}) {
  return (
    <div className={className}>
      {parameters.map((p) => (
        <label key={p} className="inline-flex items-center gap-2">
          <input
            type="checkbox"
            checked={value.includes(p)}
            onChange={(e) => onChange(e.target.checked ? [...value, p] : value.filter((x) => x !== p))}
            className="h-4 w-4 accent-[#2f6f6a]"
            data-testid={testId?.(p)}
          />
          {fitParameterLabels[p]}
        </label>
      ))}
    </div>
  );
}
