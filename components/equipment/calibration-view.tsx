"use client";
/** A recorded calibration, plotted from its stored points and curves with the same fits as when it was recorded. */
import { useMemo } from "react";
import type { CurvePoint, CurveSpec } from "@/lib/curves";
import { calibrationFitParameters } from "@/lib/validation/equipment";
import { CalibrationPlots, calibrationFits } from "./calibration-plots";

export function CalibrationView({
  expected,
  expectedName,
  points,
  pointsKind,
  fitParameters,
}: {
  expected: CurveSpec;
  expectedName: string;
  points: CurvePoint[];
  pointsKind: "recording" | "playback";
  fitParameters: string[];
}) {
  const fits = useMemo(() => {
    try {
      return calibrationFits(
        points,
        pointsKind,
        fitParameters.filter((p): p is (typeof calibrationFitParameters)[number] =>
          (calibrationFitParameters as readonly string[]).includes(p),
        ),
        expected,
      );
    } catch {
      return null;
    }
  }, [points, pointsKind, fitParameters, expected]);
  if (!fits) return <p className="text-sm text-alarm">These points cannot be fitted again.</p>;
  return (
    <CalibrationPlots expected={expected} expectedName={expectedName} fits={fits} pointsKind={pointsKind} />
  );
}
