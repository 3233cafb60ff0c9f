/**
 * How a curve is written for people: one corner, the treble rolloff, and a recorded
 * curve choice (preset version + what was changed for the side + the speed ratio).
 * Pure text, no framework: the bench, the review, the audit log, the exports and the
 * CLI all name a curve the same way.
 *
 * The treble rolloff is shown one way everywhere: as a positive attenuation,
 * "10 dB attenuation at 10 kHz". It is accepted typed either way ("10", "−10", "-10",
 * "+10", "10 dB"): a playback rolloff only ever cuts, so the sign carries no meaning and
 * both are read as attenuation.
 */
import { CORNER_NAMES, type CornerInput, type CornerName, type CurveSpec } from "./types";
import { hzToUs, usToHz } from "./units";

/** "500", "50.05", "2122", "15915": four significant figures, no exponent. */
export function formatNumber(value: number, significant = 4): string {
  if (!Number.isFinite(value)) return "";
  const abs = Math.abs(value);
  if (abs >= 10 ** significant) return String(Math.round(value));
  return String(Number(value.toPrecision(significant)));
}

/** A corner's short name in running text ("no high-pass"). */
export const CORNER_WORDS: Record<CornerName, string> = {
  turnover: "turnover",
  shelf: "shelf",
  rolloff: "rolloff",
  highpass: "high-pass",
  ultrasonic: "ultrasonic",
};

/** The one way a rolloff in dB is shown: 10 → "10 dB attenuation at 10 kHz" (the sign of what was typed is not kept). */
export function formatRolloffDb(attenuationDb: number): string {
  if (!Number.isFinite(attenuationDb)) return "—";
  return `${formatNumber(Math.abs(attenuationDb))} dB attenuation at 10 kHz`;
}

/** A stored or sent rolloff in dB → attenuation (≥ 0): −10 and 10 are the same rolloff. */
export function normalizeRolloffDb(value: number): number {
  return Math.abs(value);
}

/**
 * Typed rolloff text → attenuation in dB (≥ 0), or NaN when it is not a number.
 * Accepts "10", "−10" (U+2212), "-10", "+10", "10 dB", "−10 dB at 10 kHz", "13,7".
 */
export function parseRolloffDb(text: string): number {
  let t = text.trim().replace(/\s+/g, " ");
  t = t.replace(/\s*dB(\s*(attenuation|cut))?(\s*at\s*10\s*kHz)?\s*$/i, "");
  t = t
    .replace(/^[\u2212\u2013]/, "-")
    .replace(",", ".")
    .trim();
  if (!/^[+-]?(\d+(\.\d*)?|\.\d+)$/.test(t)) return Number.NaN;
  return normalizeRolloffDb(Number(t));
}

/** A corner value as entered, with its other unit beside it: "500 Hz (318.3 µs)", "75 µs (2122 Hz)", "10 dB attenuation at 10 kHz". */
export function formatCorner(
  c: CornerInput | null | undefined,
  { withOtherUnit = true }: { withOtherUnit?: boolean } = {},
): string {
  if (!c) return "none";
  if (c.unit === "db10k") return formatRolloffDb(c.value);
  if (c.unit === "hz")
    return withOtherUnit && c.value > 0
      ? `${formatNumber(c.value)} Hz (${formatNumber(hzToUs(c.value))} µs)`
      : `${formatNumber(c.value)} Hz`;
  return withOtherUnit && c.value > 0
    ? `${formatNumber(c.value)} µs (${formatNumber(usToHz(c.value))} Hz)`
    : `${formatNumber(c.value)} µs`;
}

/** Each given corner in a few words: "turnover 500 Hz", "no shelf", "rolloff 10 dB attenuation at 10 kHz", "level 0 dB at 1000 Hz". */
export function cornerChanges(values: Partial<CurveSpec> | null | undefined): string[] {
  if (!values) return [];
  const out: string[] = [];
  for (const n of CORNER_NAMES) {
    if (!(n in values) || values[n] === undefined) continue;
    const v = values[n];
    out.push(v ? `${CORNER_WORDS[n]} ${formatCorner(v, { withOtherUnit: false })}` : `no ${CORNER_WORDS[n]}`);
  }
  if (values.reference)
    out.push(
      `level ${formatNumber(values.reference.db).replace("-", "\u2212")} dB at ${formatNumber(values.reference.hz)} Hz`,
    );
  return out;
}

/** What names a recorded curve choice (the fields of a curve_choices row or a curve event). */
export interface CurveChoiceNaming {
  presetName?: string | null;
  presetVersion?: number | null;
  /** What was changed for the side on top of the preset (or, without a preset, every value given). */
  overrides?: Partial<CurveSpec> | null;
  cutSpeedRpm?: number | null;
  transferSpeedRpm?: number | null;
}

/**
 * A recorded curve choice in one line:
 *   "Turnover 500 Hz · no rolloff · shelf 50 Hz v1 + rolloff 10 dB attenuation at 10 kHz"
 *   "RIAA v3 · cut 78 rpm, transferred 80 rpm (×1.026)"
 *   "Own values: turnover 500 Hz, shelf 50 Hz"
 * The speed ratio is named only when the transfer speed differs from the cut speed.
 */
export function curveChoiceName(c: CurveChoiceNaming): string {
  const changes = cornerChanges(c.overrides);
  let name: string;
  if (c.presetName) {
    name = `${c.presetName} v${c.presetVersion ?? "?"}`;
    if (changes.length) name += ` + ${changes.join(", ")}`;
  } else {
    name = changes.length ? `Own values: ${changes.join(", ")}` : "Own values";
  }
  const cut = Number(c.cutSpeedRpm);
  const transfer = Number(c.transferSpeedRpm);
  if (Number.isFinite(cut) && Number.isFinite(transfer) && cut > 0 && transfer > 0 && cut !== transfer) {
    name += ` · cut ${formatNumber(cut)} rpm, transferred ${formatNumber(transfer)} rpm (×${formatNumber(transfer / cut)})`;
  }
  return name;
}
