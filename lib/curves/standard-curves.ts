/**
 * A few published curves as CurveSpecs, for examples, tests and the CLI. The
 * lab's own preset library lives in the database; these are not presets.
 */
import type { CurveSpec } from "./types";

/** RIAA / IEC 60098: 3180 µs shelf, 318 µs turnover, 75 µs rolloff. */
export const RIAA_SPEC: CurveSpec = {
  turnover: { unit: "us", value: 318 },
  shelf: { unit: "us", value: 3180 },
  rolloff: { unit: "us", value: 75 },
  reference: { hz: 1000, db: 0 },
  speedRatio: 1,
};

/** IEC 60098 amendment: RIAA plus the 7950 µs rumble high-pass. */
export const IEC_HIGHPASS_SPEC: CurveSpec = { ...RIAA_SPEC, highpass: { unit: "us", value: 7950 } };

/** BS 1928:1955 coarse groove: 3180 µs shelf, 450 µs turnover, 50 µs rolloff. */
export const BS1928_COARSE_SPEC: CurveSpec = {
  turnover: { unit: "us", value: 450 },
  shelf: { unit: "us", value: 3180 },
  rolloff: { unit: "us", value: 50 },
  reference: { hz: 1000, db: 0 },
  speedRatio: 1,
};
