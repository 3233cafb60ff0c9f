import { createHash } from "node:crypto";
import { type RawBuilder, sql, type Transaction } from "kysely";
import type { Database } from "../../db/types";
import {
  type CurveSpec,
  fitMeasuredPoints,
  fitPoints,
  type MeasurementFit,
  type MeasurementJson,
  PointsParseError,
} from "../curves";
import { curveErrorToAppError } from "../http/curve-errors";
import { AppError } from "../http/errors";
import type { TestDiscMeasurement } from "../validation/transfers";

/** A test-disc measurement as a curve choice keeps it: the server's fit, and the points file. */
export interface TestDiscEvidence extends MeasurementFit {
  sourceFileName: string | null;
  /** Null only for evidence recorded without its file (the table allows it). */
  sourceText: string | null;
  sourceSha256: string | null;
}

/**
 * Reads the points from the file the engineer gave and fits them with the curve engine's
 * own fit, starting from the curve being chosen at its cut speed (lib/curves/measurement.ts,
 * the same the bench's form tries in the browser). What is kept is what the server worked
 * out, never a client's figures. A file it cannot read, or points that cannot settle the
 * values, answer 422 naming the line or the value.
 */
export function fitTestDiscMeasurement(m: TestDiscMeasurement, chosen: CurveSpec): TestDiscEvidence {
  let fit: MeasurementFit;
  try {
    fit = fitMeasuredPoints(m.sourceText, m.pointsKind, m.fit, chosen);
  } catch (err) {
    if (err instanceof PointsParseError)
      throw new AppError("invalid", 422, `The measured points cannot be read: ${err.message}`, {
        "measurement.sourceText": [err.message],
      });
    throw curveErrorToAppError(err, "measurement");
  }
  return {
    ...fit,
    sourceFileName: m.sourceFileName ?? null,
    sourceText: m.sourceText,
    sourceSha256: createHash("sha256").update(m.sourceText, "utf8").digest("hex"),
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
  try {
    return { ...kept, ...fitPoints(kept.points, kept.pointsKind, kept.fitParameters, chosen) };
  } catch (err) {
    throw curveErrorToAppError(err, "measurement");
  }
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

/** What an event says of the evidence: the figures and the file's hash, not the whole file. */
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

/**
 * The measurement kept with a curve choice, as one JSON value (null for a choice without
 * one), from `curve_choice_evidence` joined as `alias`: the choice's list and the record
 * read it the same way.
 */
export function measurementJson(alias: string): RawBuilder<MeasurementJson | null> {
  const e = (column: string) => sql.ref(`${alias}.${column}`);
  return sql<MeasurementJson | null>`CASE WHEN ${e("choice_id")} IS NULL THEN NULL ELSE jsonb_build_object(
    'pointsKind', ${e("points_kind")}, 'points', ${e("points")}, 'fitParameters', to_jsonb(${e("fit_parameters")}),
    'fittedSpec', ${e("fitted_spec")}, 'levelOffsetDb', ${e("level_offset_db")}, 'residuals', ${e("residuals")},
    'rmsDb', ${e("rms_db")}, 'worstDb', ${e("worst_db")}, 'worstHz', ${e("worst_hz")},
    'sourceFileName', ${e("source_file_name")}, 'sourceSha256', ${e("source_sha256")}) END`;
}
