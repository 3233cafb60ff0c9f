import { CurveError, type CurveSpec, resolveCurve } from "../curves";
import { AppError } from "../http/errors";

/** Runs lib/curves' own checks on a spec and answers a 422 naming the parameter. */
export function checkSpec(spec: CurveSpec, field = "spec"): CurveSpec {
  try {
    resolveCurve(spec);
    return spec;
  } catch (err) {
    throw asCurveAppError(err, field);
  }
}

export function asCurveAppError(err: unknown, field = "spec"): unknown {
  if (err instanceof CurveError) {
    return new AppError("invalid", 422, err.message, { [`${field}.${err.parameter}`]: [err.message] });
  }
  return err;
}
