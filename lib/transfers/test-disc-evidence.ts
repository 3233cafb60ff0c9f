import { createHash } from "node:crypto";
import {
  type CurveSpec,
  type FitParameter,
  type FitResult,
  fitCurve,
  parsePointsCsv,
  PointsParseError,
} from "../curves";
import { curveErrorToAppError } from "../http/curve-errors";
import { AppError } from "../http/errors";
import type { TestDiscMeasurement } from "../validation/transfers";

/** A test-disc measurement as a curve choice keeps it: the points, the server's fit, and the file. */
export interface TestDiscEvidence {
  pointsKind: "recording" | "playback";
  points: { hz: number; db: number }[];
  fitParameters: FitParameter[];
  fittedSpec: CurveSpec;
  levelOffsetDb: number;
  residuals: FitResult["residuals"];
  rmsDb: number;
  worstDb: number;
  worstHz: number;
  sourceFileName: string | null;
  sourceText: string;
  sourceSha256: string;
}

/**
 * Reads the points from the file the engineer gave and fits them with the curve engine's
 * own fit, starting from the curve being chosen (its speed aside: a test disc is measured
 * at its own speed). What is kept is what the server worked out, never a client's figures.
 * A file it cannot read, or points that cannot settle the values, answer 422 naming the
 * line or the value.
 */
export function fitTestDiscMeasurement(m: TestDiscMeasurement, chosen: CurveSpec): TestDiscEvidence {
  let points: { hz: number; db: number }[];
  try {
    points = parsePointsCsv(m.sourceText);
  } catch (err) {
    if (err instanceof PointsParseError)
      throw new AppError("invalid", 422, `The measured points cannot be read: ${err.message}`, {
        "measurement.sourceText": [err.message],
      });
    throw err;
  }
  if (points.length > 5000)
    throw new AppError(
      "invalid",
      422,
      `The measurement has ${points.length} points; at most 5 000 are kept.`,
      {
        "measurement.sourceText": ["At most 5 000 points."],
      },
    );
  const { speedRatio: _speedRatio, ...initial } = chosen;
  let fit: FitResult;
  try {
    fit = fitCurve({ points, kind: m.pointsKind, fit: m.fit, initial });
  } catch (err) {
    throw curveErrorToAppError(err, "measurement");
  }
  return {
    pointsKind: m.pointsKind,
    points,
    fitParameters: m.fit,
    fittedSpec: fit.spec,
    levelOffsetDb: fit.levelOffsetDb,
    residuals: fit.residuals,
    rmsDb: fit.rmsDb,
    worstDb: fit.worstDb,
    worstHz: fit.worstHz,
    sourceFileName: m.sourceFileName ?? null,
    sourceText: m.sourceText,
    sourceSha256: createHash("sha256").update(m.sourceText, "utf8").digest("hex"),
  };
}

/** What an event and the record say of the evidence: the figures and the file's hash, not the whole file. */
export function evidenceSummary(e: TestDiscEvidence) {
  return {
    pointsKind: e.pointsKind,
    pointCount: e.points.length,
    fitParameters: e.fitParameters,
    fittedSpec: e.fittedSpec,
    levelOffsetDb: e.levelOffsetDb,
    rmsDb: e.rmsDb,
    worstDb: e.worstDb,
    worstHz: e.worstHz,
    sourceFileName: e.sourceFileName,
    sourceSha256: e.sourceSha256,
  };
}
