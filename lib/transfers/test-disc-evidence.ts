import { createHash } from "node:crypto";
import { type RawBuilder, sql } from "kysely";
import {
  type CurveSpec,
  fitMeasuredPoints,
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
  sourceText: string;
  sourceSha256: string;
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
