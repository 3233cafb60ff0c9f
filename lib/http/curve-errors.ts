import { CurveError, type CurveSpec, resolveCurve } from "../curves";
import { AppError } from "./errors";

/**
 * lib/curves' errors as the app's: a CurveError names the parameter it refuses, which
 * becomes a 422 with that field under `field` ("spec.turnover", "overrides.rolloff").
 * Anything else is passed back as it came, for toAppError.
 */
export function curveErrorToAppError(err: unknown, field = "spec"): unknown {
  if (err instanceof CurveError) {
    return new AppError("invalid", 422, err.message, { [`${field}.${err.parameter}`]: [err.message] });
  }
  return err;
}

/** Runs lib/curves' own checks on a spec; a spec it refuses answers 422 naming the parameter. */
export function checkCurveSpec(spec: CurveSpec, field = "spec"): CurveSpec {
  try {
    resolveCurve(spec);
    return spec;
  } catch (err) {
    throw curveErrorToAppError(err, field);
  }
}
