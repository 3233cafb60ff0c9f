import { createHash } from "node:crypto";
import type { Transaction } from "kysely";
import type { Database } from "../../db/types";
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
  /** Null only for evidence recorded without its file (the table allows it). */
  sourceText: string | null;
  sourceSha256: string | null;
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
  return {
    pointsKind: m.pointsKind,
    points,
    fitParameters: m.fit,
    ...fitPoints(points, m.pointsKind, m.fit, chosen),
    sourceFileName: m.sourceFileName ?? null,
    sourceText: m.sourceText,
    sourceSha256: createHash("sha256").update(m.sourceText, "utf8").digest("hex"),
  };
}

/** The fit of points already read, starting from the curve being chosen (its speed aside). */
function fitPoints(
  points: { hz: number; db: number }[],
  kind: TestDiscEvidence["pointsKind"],
  parameters: FitParameter[],
  chosen: CurveSpec,
) {
  const { speedRatio: _speedRatio, ...initial } = chosen;
  let fit: FitResult;
  try {
    fit = fitCurve({ points, kind, fit: parameters, initial });
  } catch (err) {
    throw curveErrorToAppError(err, "measurement");
  }
  return {
    fittedSpec: fit.spec,
    levelOffsetDb: fit.levelOffsetDb,
    residuals: fit.residuals,
    rmsDb: fit.rmsDb,
    worstDb: fit.worstDb,
    worstHz: fit.worstHz,
  };
}

/**
 * The same measurement kept for another curve choice of the side (a re-render campaign's):
 * the points and the file as they were recorded, fitted again from the new curve, since the
 * values the fit leaves alone, and so its residuals, are the chosen curve's.
 */
export function refitTestDiscEvidence(
  kept: Pick<
    TestDiscEvidence,
    "pointsKind" | "points" | "fitParameters" | "sourceFileName" | "sourceText" | "sourceSha256"
  >,
  chosen: CurveSpec,
): TestDiscEvidence {
  return { ...kept, ...fitPoints(kept.points, kept.pointsKind, kept.fitParameters, chosen) };
}

/** Keeps the evidence with its curve choice (the table refuses any later change). */
export async function insertTestDiscEvidence(
  trx: Transaction<Database>,
  choiceId: string,
  e: TestDiscEvidence,
): Promise<void> {
  await trx
    .insertInto("curve_choice_evidence")
    .values({
      choice_id: choiceId,
      points_kind: e.pointsKind,
      points: JSON.stringify(e.points),
      fit_parameters: e.fitParameters,
      fitted_spec: JSON.stringify(e.fittedSpec),
      level_offset_db: e.levelOffsetDb,
      residuals: JSON.stringify(e.residuals),
      rms_db: e.rmsDb,
      worst_db: e.worstDb,
      worst_hz: e.worstHz,
      source_file_name: e.sourceFileName,
      source_text: e.sourceText,
      source_sha256: e.sourceSha256,
    })
    .execute();
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
