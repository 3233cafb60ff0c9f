/**
 * Validation and resolution of a CurveSpec: every corner in every unit, the
 * time constant the filter uses, and clear refusals naming the parameter.
 */
import { CORNER_NAMES, CurveError } from "./types";
import type {
  CornerInput,
  CornerName,
  CurveSpec,
  ReferenceLevel,
  ResolvedCorner,
  ResolvedCurve,
} from "./types";
import { normalizeRolloffDb } from "./names";
import { db10kToUs, hzToUs, usToDb10k, usToHz } from "./units";

export const DEFAULT_REFERENCE: ReferenceLevel = { hz: 1000, db: 0 };

/** 44.1 kHz is the lowest rate whose band reaches 20 kHz with room for a transition; 384 kHz the highest a lab transfers at. */
export const MIN_SAMPLE_RATE_HZ = 44_100;
export const MAX_SAMPLE_RATE_HZ = 384_000;
export const MIN_REFERENCE_HZ = 10;
export const MAX_REFERENCE_HZ = 30_000;

function isFiniteNumber(x: unknown): x is number {
  return typeof x === "number" && Number.isFinite(x);
}

/** How a person names each corner in a message (the field's own words, not the code's). */
const cornerWords: Record<CornerName, string> = {
  turnover: "Turnover",
  shelf: "Low-frequency shelf",
  rolloff: "Rolloff",
  highpass: "High-pass",
  ultrasonic: "Ultrasonic corner",
};

/** A value as a person typed it, for a message ("blank" when there is no number at all). */
function typed(v: unknown): string {
  if (v === undefined || v === null || v === "" || (typeof v === "number" && Number.isNaN(v))) return "blank";
  const shown =
    typeof v === "string" || typeof v === "number" || typeof v === "boolean" ? String(v) : JSON.stringify(v);
  return `“${shown}”`;
}

function resolveCorner(name: CornerName, input: CornerInput, speedRatio: number): ResolvedCorner | null {
  const label = cornerWords[name] ?? name;
  if (typeof input !== "object" || input === null) {
    throw new CurveError(name, `${label}: give a value and its unit (Hz, µs or dB at 10 kHz).`);
  }
  const { unit } = input;
  // A rolloff in dB at 10 kHz only ever cuts: "−10" and "10" are the same 10 dB of attenuation (names.ts).
  const value =
    unit === "db10k" && isFiniteNumber(input.value) ? normalizeRolloffDb(input.value) : input.value;
  if (unit !== "hz" && unit !== "us" && unit !== "db10k") {
    throw new CurveError(name, `${label}: choose its unit: Hz, µs or dB at 10 kHz.`);
  }
  if (unit === "db10k" && name !== "rolloff") {
    throw new CurveError(
      name,
      `${label}: dB at 10 kHz is only a way to give the rolloff; give it in Hz or µs.`,
    );
  }
  if (!isFiniteNumber(value)) {
    throw new CurveError(
      name,
      typed(value) === "blank"
        ? `${label}: type a number.`
        : `${label}: type a number (${typed(value)} is not one).`,
    );
  }
  if (unit === "db10k") {
    if (value === 0) return null;
    if (value > 60) {
      throw new CurveError(
        name,
        `${label}: ${value} dB at 10 kHz is beyond any playback curve (limit 60 dB).`,
      );
    }
  } else if (value <= 0) {
    throw new CurveError(
      name,
      `${label}: the ${unit === "hz" ? "frequency" : "time constant"} must be above 0 (it is ${value}).`,
    );
  }
  const tauUs = unit === "hz" ? hzToUs(value) : unit === "us" ? value : db10kToUs(value);
  if (!(tauUs > 0) || !Number.isFinite(tauUs)) {
    throw new CurveError(
      name,
      `${label}: ${value} ${unit === "hz" ? "Hz" : unit === "us" ? "µs" : "dB at 10 kHz"} gives no usable time constant.`,
    );
  }
  const filterTauUs = tauUs / speedRatio;
  const corner: ResolvedCorner = {
    parameter: name,
    entered: { unit, value },
    tauUs,
    hz: usToHz(tauUs),
    filterTauUs,
    filterHz: usToHz(filterTauUs),
  };
  if (name === "rolloff") corner.db10k = usToDb10k(tauUs);
  return corner;
}

/**
 * Validate a spec and return every corner in all units. Throws CurveError naming
 * the parameter at fault.
 */
/**
 * The curve of a side as chosen: a preset version's values, then the overrides for these
 * sides, then the speed ratio transfer ÷ cut (played at another speed than it was cut, every
 * frequency moves by that ratio). The bench plots and plays it; the server records it.
 */
export function mergeCurve(
  presetSpec: CurveSpec | null,
  overrides: Partial<CurveSpec>,
  cutSpeedRpm: number,
  transferSpeedRpm: number,
): CurveSpec {
  const merged: CurveSpec = { ...(presetSpec ?? {}) };
  for (const [k, v] of Object.entries(overrides) as [keyof CurveSpec, unknown][]) {
    if (v !== undefined) (merged as Record<string, unknown>)[k] = v;
  }
  merged.speedRatio = transferSpeedRpm / cutSpeedRpm;
  return merged;
}

/**
 * The curve a speed-corrected render filters the transfer with, before it is played at the cut
 * speed: the corners stay where the transfer has them (speed ratio transfer ÷ cut) and the
 * reference frequency moves with them, so the corrected copy, whose frequencies are the cut's,
 * is levelled at the reference itself (0 dB at 1 kHz of the copy, not at 1 kHz of the transfer).
 */
export function speedCorrectedSpec(spec: CurveSpec): CurveSpec {
  const ratio = spec.speedRatio ?? 1;
  const reference = spec.reference ?? DEFAULT_REFERENCE;
  return { ...spec, reference: { hz: reference.hz * ratio, db: reference.db } };
}

export function resolveCurve(spec: CurveSpec): ResolvedCurve {
  if (typeof spec !== "object" || spec === null)
    throw new CurveError("spec", "The curve is missing: choose a preset or give its corners.");

  const speedRatio = spec.speedRatio ?? 1;
  if (!isFiniteNumber(speedRatio) || speedRatio <= 0) {
    throw new CurveError(
      "speedRatio",
      `The transfer and cut speeds must both be numbers above 0 rpm (their ratio is ${typed(speedRatio)}).`,
    );
  }
  if (speedRatio < 0.1 || speedRatio > 10) {
    throw new CurveError(
      "speedRatio",
      `The transfer speed is ${speedRatio} times the cut speed, outside 0.1–10: check the two speeds.`,
    );
  }

  const reference = spec.reference ?? DEFAULT_REFERENCE;
  if (typeof reference !== "object" || reference === null) {
    throw new CurveError("reference", "The reference point needs a frequency (Hz) and a level (dB).");
  }
  if (!isFiniteNumber(reference.hz) || reference.hz < MIN_REFERENCE_HZ || reference.hz > MAX_REFERENCE_HZ) {
    throw new CurveError(
      "reference.hz",
      `The reference frequency must be between ${MIN_REFERENCE_HZ} Hz and ${MAX_REFERENCE_HZ} Hz (it is ${typed(reference.hz)}).`,
    );
  }
  if (!isFiniteNumber(reference.db) || Math.abs(reference.db) > 60) {
    throw new CurveError(
      "reference.db",
      `The reference level must be a number of dB within ±60 (it is ${typed(reference.db)}).`,
    );
  }

  const corners = {} as Record<CornerName, ResolvedCorner | null>;
  for (const name of CORNER_NAMES) {
    const input = spec[name];
    corners[name] = input == null ? null : resolveCorner(name, input, speedRatio);
  }
  const { turnover, shelf, highpass } = corners;

  if (shelf && !turnover) {
    throw new CurveError(
      "shelf",
      "A shelf ends the bass boost that a turnover starts: give a turnover too, or remove the shelf for a flat-bass curve.",
    );
  }
  if (shelf && turnover && !(shelf.tauUs > turnover.tauUs)) {
    throw new CurveError(
      "shelf",
      `The shelf time constant (${shelf.tauUs.toFixed(2)} µs, ${shelf.hz.toFixed(2)} ` +
        `Hz) must be longer than the turnover's (${turnover.tauUs.toFixed(2)} µs, ${turnover.hz.toFixed(2)} ` +
        `Hz): the shelf frequency must be below the turnover.`,
    );
  }
  if (turnover && !shelf && !highpass) {
    throw new CurveError(
      "shelf",
      "A turnover with neither a shelf nor a high-pass has unbounded bass gain; " +
        "add a low-frequency shelf (e.g. 3180 µs) or a rumble high-pass (e.g. 7950 µs).",
    );
  }

  return {
    spec,
    ...corners,
    reference: { hz: reference.hz, db: reference.db },
    speedRatio,
    flatBass: !turnover && !shelf,
  };
}

/** Throws CurveError("sampleRateHz") unless 44 100 ≤ rate ≤ 384 000. */
export function validateSampleRate(sampleRateHz: number): void {
  if (!isFiniteNumber(sampleRateHz)) {
    throw new CurveError(
      "sampleRateHz",
      `The sample rate must be a number of Hz (it is ${typed(sampleRateHz)}).`,
    );
  }
  if (sampleRateHz < MIN_SAMPLE_RATE_HZ) {
    throw new CurveError(
      "sampleRateHz",
      `Sample rate ${sampleRateHz} Hz cannot carry 20 kHz with a transition band; use at least ${MIN_SAMPLE_RATE_HZ} Hz.`,
    );
  }
  if (sampleRateHz > MAX_SAMPLE_RATE_HZ) {
    throw new CurveError(
      "sampleRateHz",
      `Sample rate ${sampleRateHz} Hz is above the supported ${MAX_SAMPLE_RATE_HZ} Hz.`,
    );
  }
}
