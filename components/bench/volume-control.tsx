"use client";
/** The players' volume, in dB below full level: a slider with its figure, for the bench's and the review's players. */
import { useId } from "react";

export function VolumeControl({
  valueDb,
  onChange,
  testId,
}: {
  valueDb: number;
  onChange: (db: number) => void;
  testId?: string;
}) {
  const id = useId();
  return (
    <>
      <label htmlFor={id} className="text-sm font-medium">
        Volume
      </label>
      <input
        id={id}
        type="range"
        min={-60}
        max={0}
        step={1}
        value={valueDb}
        onChange={(e) => onChange(Number(e.target.value))}
        aria-valuetext={`${valueDb} dB`}
        className="w-36 accent-[#a9591a]"
        data-testid={testId}
      />
      <span className="w-14 font-mono text-xs">{valueDb} dB</span>
    </>
  );
}
