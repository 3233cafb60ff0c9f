/**
 * Shared types of the curve model. Everything here is plain JSON so that a
 * CurveSpec can be stored (PostgreSQL jsonb, one preset version) and sent over
 * HTTP unchanged.
 */

/** Units a corner may be entered in. `db10k` (playback attenuation at 10 kHz) is only meaningful for the rolloff. */
export type CornerUnit = "hz" | "us" | "db10k";

export interface CornerInput {
  unit: CornerUnit;
  value: number;
}

export interface ReferenceLevel {
  /** Frequency at which the curve is normalised, 10 Hz–30 kHz. */
  hz: number;
  /** Gain of the curve at that frequency. */
  db: number;
}

/**
 * A playback curve as a lab enters it. Optional corners are simply absent
 * (or null). A turnover without a shelf and without a high-pass is refused
 * (unbounded bass gain); no turnover and no shelf is a flat-bass curve.
 */
export interface CurveSpec {
  turnover?: CornerInput | null;
  shelf?: CornerInput | null;
  rolloff?: CornerInput | null;
  highpass?: CornerInput | null;
  ultrasonic?: CornerInput | null;
  /** Default { hz: 1000, db: 0 }. */
  reference?: ReferenceLevel | null;
  /** Transfer speed / cut speed; every corner frequency is multiplied by it. Default 1. */
  speedRatio?: number | null;
}

export type CornerName = "turnover" | "shelf" | "rolloff" | "highpass" | "ultrasonic";

export const CORNER_NAMES: readonly CornerName[] = ["turnover", "shelf", "rolloff", "highpass", "ultrasonic"];

/** One corner in every unit. */
export interface ResolvedCorner {
  parameter: CornerName;
  /** The value exactly as entered (at cut speed). */
  entered: CornerInput;
  /** Time constant derived from the entered value, unrounded, at cut speed. */
  tauUs: number;
  /** Corner frequency 1/(2π·τ) at cut speed. */
  hz: number;
  /** Rolloff only: playback attenuation at 10 kHz that this time constant gives. */
  db10k?: number;
  /** What the filter uses: tauUs / speedRatio (the derived time constant, never a rounded display value). */
  filterTauUs: number;
  filterHz: number;
}

export interface ResolvedCurve {
  spec: CurveSpec;
  turnover: ResolvedCorner | null;
  shelf: ResolvedCorner | null;
  rolloff: ResolvedCorner | null;
  highpass: ResolvedCorner | null;
  ultrasonic: ResolvedCorner | null;
  reference: ReferenceLevel;
  speedRatio: number;
  /** True when the curve has neither turnover nor shelf. */
  flatBass: boolean;
}

/** Validation or design failure naming the offending parameter (e.g. "shelf", "sampleRateHz", "reference.hz"). */
export class CurveError extends Error {
  readonly parameter: string;
  constructor(parameter: string, message: string) {
    super(message);
    this.name = "CurveError";
    this.parameter = parameter;
  }
  toJSON(): { parameter: string; message: string } {
    return { parameter: this.parameter, message: this.message };
  }
}

/** A (frequency, level) point of a published table or a measured test-disc transfer. */
export interface CurvePoint {
  hz: number;
  db: number;
}
