import { type FitParameter, type FitResult, fitCurve } from "./fit";
import { parsePointsCsv } from "./points-csv";
import { CurveError, type CurvePoint, type CurveSpec } from "./types";

/** The most points a measurement keeps (a test disc's sweep fits well below). */
export const maxMeasuredPoints = 5000;

/**
 * A test-disc measurement fitted with the curve engine: what a curve choice keeps as its
 * evidence (lib/transfers/test-disc-evidence.ts on the server, the bench's form in the
 * browser, the review page and the record all read this one shape).
 */
export interface MeasurementFit {
  /** What the points are: the disc's recording characteristic or the playback curve that flattens it. */
  pointsKind: "recording" | "playback";
  points: CurvePoint[];
  fitParameters: FitParameter[];
  fittedSpec: CurveSpec;
  levelOffsetDb: number;
  residuals: FitResult["residuals"];
  rmsDb: number;
  worstDb: number;
  worstHz: number;
}

/** A measurement as a curve choice shows it: the fit, and the points file it was read from. */
export interface MeasurementJson extends MeasurementFit {
  sourceFileName: string | null;
  sourceSha256: string | null;
}

/** The curve as it stands at the disc's cut speed: a test disc is measured at its own speed. */
export function atCutSpeed(spec: CurveSpec): CurveSpec {
  const { speedRatio: _speedRatio, ...atCut } = spec;
  return atCut;
}

/**
 * Reads (Hz, dB) points from a points file and fits the chosen values, starting from the
 * curve being chosen at its cut speed. Throws PointsParseError for a line it cannot read
 * and CurveError for points that cannot settle the values.
 */
export function fitMeasuredPoints(
  text: string,
  pointsKind: "recording" | "playback",
  fit: FitParameter[],
  chosen: CurveSpec,
): MeasurementFit {
  const points = parsePointsCsv(text);
  if (points.length > maxMeasuredPoints)
    throw new CurveError(
      "points",
      `The measurement has ${points.length} points; at most ${maxMeasuredPoints} are kept.`,
    );
  return fitPoints(points, pointsKind, fit, chosen);
}

/**
 * Fits points already read, starting from the curve being chosen at its cut speed: a new
 * measurement, or one kept with an earlier choice and fitted again from a new curve (the
 * values the fit leaves alone, and so its residuals, are the chosen curve's).
 */
export function fitPoints(
  points: CurvePoint[],
  pointsKind: "recording" | "playback",
  fit: FitParameter[],
  chosen: CurveSpec,
): MeasurementFit {
  const r = fitCurve({ points, kind: pointsKind, fit, initial: atCutSpeed(chosen) });
  return {
    pointsKind,
    points,
    fitParameters: fit,
    fittedSpec: r.spec,
    levelOffsetDb: r.levelOffsetDb,
    residuals: r.residuals,
    rmsDb: r.rmsDb,
    worstDb: r.worstDb,
    worstHz: r.worstHz,
  };
}

/** The points as playback levels lying on the fitted curve: a recording table's sign turned, the level offset taken off. */
export function measuredPlaybackPoints(
  m: Pick<MeasurementFit, "pointsKind" | "points" | "levelOffsetDb">,
): CurvePoint[] {
  const sign = m.pointsKind === "recording" ? -1 : 1;
  return m.points.map((p) => ({ hz: p.hz, db: sign * p.db - m.levelOffsetDb }));
}
