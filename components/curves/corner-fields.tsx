"use client";
/**
 * The curve's corners, each in every unit the trade writes it in. The unit you
 * type in is the one stored (with the value exactly as typed); the other
 * fields show what it works out to. Errors from lib/curves appear beside the
 * field they name.
 */
import { useId, useState } from "react";
import {
  type CornerInput,
  type CornerName,
  type CornerUnit,
  type CurveSpec,
  db10kToUs,
  hzToUs,
  parseRolloffDb,
  usToDb10k,
  usToHz,
} from "@/lib/curves";
import { cx } from "@/components/ui/cx";
import { formatNumber } from "./plot-format";

export interface FieldError {
  parameter: string;
  message: string;
}

interface CornerDef {
  name: CornerName;
  title: string;
  role: string;
  units: CornerUnit[];
  /** Used when the corner is switched on for the first time (µs). */
  startUs: number;
}

const CORNERS: CornerDef[] = [
  {
    name: "turnover",
    title: "Bass turnover",
    role: "Bass boost rises below it at 6 dB/octave.",
    units: ["hz", "us"],
    startUs: 318,
  },
  {
    name: "shelf",
    title: "Low-frequency shelf",
    role: "Where the bass boost levels off.",
    units: ["hz", "us"],
    startUs: 3180,
  },
  {
    name: "rolloff",
    title: "Treble rolloff",
    role: "Playback cut in the treble, quoted as its attenuation at 10 kHz (10 and −10 both mean 10 dB of cut).",
    units: ["db10k", "us", "hz"],
    startUs: 75,
  },
  {
    name: "highpass",
    title: "Rumble high-pass",
    role: "Cuts subsonic rumble below it.",
    units: ["hz", "us"],
    startUs: 7950,
  },
  {
    name: "ultrasonic",
    title: "Ultrasonic zero",
    role: "A rise far above the audio band, from some cutting chains.",
    units: ["hz", "us"],
    startUs: 3.18,
  },
];

const UNIT_LABEL: Record<CornerUnit, string> = { hz: "Hz", us: "µs", db10k: "Attenuation at 10 kHz (dB)" };
const UNIT_WORDS: Record<CornerUnit, string> = {
  hz: "in Hz",
  us: "in µs",
  db10k: "in dB of attenuation at 10 kHz",
};

/** Typed text → number; empty or unreadable text gives NaN, which lib/curves refuses with a message naming the field. */
export function parseNumber(text: string): number {
  const t = text.trim().replace(",", ".");
  if (t === "") return Number.NaN;
  return Number(t);
}

/** Typed text of a corner in a unit: a rolloff in dB is read as attenuation whichever sign it has (lib/curves parseRolloffDb). */
export function parseCornerText(unit: CornerUnit, text: string): number {
  return unit === "db10k" ? parseRolloffDb(text) : parseNumber(text);
}

function tauOf(input: CornerInput): number {
  return input.unit === "hz"
    ? hzToUs(input.value)
    : input.unit === "us"
      ? input.value
      : db10kToUs(input.value);
}

/** The corner shown in another unit; "" where it has no value (0 dB rolloff, unreadable input). */
function derived(input: CornerInput, unit: CornerUnit): string {
  if (!Number.isFinite(input.value)) return "";
  if (unit === input.unit) return String(input.value);
  const tau = tauOf(input);
  if (!(tau > 0) || !Number.isFinite(tau))
    return unit === "db10k" && input.unit === "db10k" ? String(input.value) : "";
  const v = unit === "hz" ? usToHz(tau) : unit === "us" ? tau : usToDb10k(tau);
  return unit === "db10k" ? v.toFixed(2) : formatNumber(v);
}

const inputBase =
  "h-9 w-full rounded-md border px-2.5 text-sm font-mono shadow-inner shadow-paper-deep/60 focus:border-shellac";

function CornerRow({
  def,
  value,
  onChange,
  error,
}: {
  def: CornerDef;
  value: CornerInput | null | undefined;
  onChange: (next: CornerInput | null) => void;
  error: string | null;
}) {
  const id = useId();
  const [draft, setDraft] = useState<{ unit: CornerUnit; text: string } | null>(null);
  const [stash, setStash] = useState<CornerInput | null>(null);
  const on = value != null;

  const toggle = (checked: boolean) => {
    setDraft(null);
    if (checked) onChange(stash ?? { unit: "us", value: def.startUs });
    else {
      if (value) setStash(value);
      onChange(null);
    }
  };

  return (
    <fieldset
      className={cx(
        "rounded-lg border px-3 pb-3 pt-2",
        on ? "border-paper-edge bg-white" : "border-dashed border-paper-edge bg-transparent",
      )}
      data-testid={`corner-${def.name}`}
    >
      <legend className="sr-only">{def.title}</legend>
      <div className="flex items-start gap-2.5">
        <input
          id={`${id}-on`}
          type="checkbox"
          checked={on}
          onChange={(e) => toggle(e.target.checked)}
          className="mt-1 h-4 w-4 accent-[#2f6f6a]"
          data-testid={`${def.name}-on`}
          aria-describedby={`${id}-role`}
        />
        <div className="min-w-0">
          <label htmlFor={`${id}-on`} className="text-sm font-semibold text-ink">
            {def.title}
          </label>
          <p id={`${id}-role`} className="text-xs text-ink-faint">
            {def.role}
          </p>
        </div>
      </div>
      {on ? (
        <div className="mt-2 grid grid-cols-2 items-end gap-2">
          {def.units.map((unit) => {
            const entered = value.unit === unit;
            const text = draft?.unit === unit ? draft.text : derived(value, unit);
            return (
              // The rolloff's attenuation in dB, the way it is quoted, gets the whole first line.
              <div key={unit} className={cx("space-y-0.5", unit === "db10k" && "col-span-2")}>
                <label
                  htmlFor={`${id}-${unit}`}
                  className="flex items-center gap-1 text-xs font-medium text-ink-soft"
                >
                  {UNIT_LABEL[unit]}
                  {entered ? (
                    <span className="rounded bg-groove-wash px-1 text-[0.65rem] text-groove">as entered</span>
                  ) : null}
                </label>
                <input
                  id={`${id}-${unit}`}
                  type="text"
                  inputMode="decimal"
                  autoComplete="off"
                  aria-label={`${def.title} ${UNIT_WORDS[unit]}`}
                  aria-invalid={error ? true : undefined}
                  aria-describedby={error ? `${id}-error` : undefined}
                  data-testid={`${def.name}-${unit}`}
                  value={text}
                  onChange={(e) => {
                    setDraft({ unit, text: e.target.value });
                    onChange({ unit, value: parseCornerText(unit, e.target.value) });
                  }}
                  onBlur={() => {
                    // Once readable, the field shows the value the one way it is always shown (a rolloff as a positive attenuation).
                    if (draft && Number.isFinite(parseCornerText(draft.unit, draft.text))) setDraft(null);
                  }}
                  className={cx(
                    inputBase,
                    error ? "border-alarm" : "border-paper-edge",
                    entered ? "bg-white text-ink" : "bg-paper/70 text-ink-soft",
                  )}
                />
              </div>
            );
          })}
        </div>
      ) : null}
      {error ? (
        <p
          id={`${id}-error`}
          role="alert"
          className="mt-2 text-xs font-medium text-alarm"
          data-testid={`error-${def.name}`}
        >
          {error}
        </p>
      ) : null}
    </fieldset>
  );
}

function SmallNumber({
  id,
  label,
  value,
  onChange,
  error,
  testId,
  suffix,
}: {
  id: string;
  label: string;
  value: string;
  onChange: (text: string) => void;
  error?: boolean;
  testId: string;
  suffix?: string;
}) {
  return (
    <div className="space-y-0.5">
      <label htmlFor={id} className="block text-xs font-medium text-ink-soft">
        {label}
        {suffix ? <span className="text-ink-faint"> ({suffix})</span> : null}
      </label>
      <input
        id={id}
        type="text"
        inputMode="decimal"
        autoComplete="off"
        value={value}
        aria-invalid={error ? true : undefined}
        data-testid={testId}
        onChange={(e) => onChange(e.target.value)}
        className={cx(inputBase, "bg-white", error ? "border-alarm" : "border-paper-edge")}
      />
    </div>
  );
}

/**
 * Controlled by `spec`; remount it (change its key) when the spec is replaced from outside
 * (a preset loaded, a fit applied) so the typed text starts afresh.
 */
export function CornerFields({
  spec,
  onChange,
  error,
}: {
  spec: CurveSpec;
  onChange: (spec: CurveSpec) => void;
  error: FieldError | null;
}) {
  const id = useId();
  const ref = spec.reference ?? { hz: 1000, db: 0 };
  const [refHz, setRefHz] = useState(String(ref.hz));
  const [refDb, setRefDb] = useState(String(ref.db));
  const ratio0 = spec.speedRatio ?? 1;
  const [cutRpm, setCutRpm] = useState("78");
  const [transferRpm, setTransferRpm] = useState(formatNumber(78 * ratio0, 5));

  const errorFor = (p: string) => (error && error.parameter === p ? error.message : null);
  const speedError = errorFor("speedRatio");
  const refError = errorFor("reference.hz") ?? errorFor("reference.db") ?? errorFor("reference");
  const ratio = parseNumber(transferRpm) / parseNumber(cutRpm);

  const setSpeeds = (cut: string, transfer: string) => {
    setCutRpm(cut);
    setTransferRpm(transfer);
    const r = parseNumber(transfer) / parseNumber(cut);
    onChange({ ...spec, speedRatio: r });
  };

  return (
    <div className="space-y-3" data-testid="corner-fields">
      {CORNERS.map((def) => (
        <CornerRow
          key={def.name}
          def={def}
          value={spec[def.name]}
          error={errorFor(def.name)}
          onChange={(next) => onChange({ ...spec, [def.name]: next })}
        />
      ))}

      <fieldset className="rounded-lg border border-paper-edge bg-white px-3 pb-3 pt-2">
        <legend className="px-1 text-sm font-semibold text-ink">Level reference</legend>
        <p className="mb-2 text-xs text-ink-faint">The curve passes through this gain at this frequency.</p>
        <div className="grid grid-cols-2 gap-2">
          <SmallNumber
            id={`${id}-ref-hz`}
            label="Frequency"
            suffix="Hz"
            value={refHz}
            error={!!(errorFor("reference.hz") || errorFor("reference"))}
            testId="reference-hz"
            onChange={(t) => {
              setRefHz(t);
              onChange({ ...spec, reference: { hz: parseNumber(t), db: parseNumber(refDb) } });
            }}
          />
          <SmallNumber
            id={`${id}-ref-db`}
            label="Gain"
            suffix="dB"
            value={refDb}
            error={!!errorFor("reference.db")}
            testId="reference-db"
            onChange={(t) => {
              setRefDb(t);
              onChange({ ...spec, reference: { hz: parseNumber(refHz), db: parseNumber(t) } });
            }}
          />
        </div>
        {refError ? (
          <p role="alert" className="mt-2 text-xs font-medium text-alarm" data-testid="error-reference">
            {refError}
          </p>
        ) : null}
      </fieldset>

      <fieldset className="rounded-lg border border-paper-edge bg-white px-3 pb-3 pt-2">
        <legend className="px-1 text-sm font-semibold text-ink">Speed</legend>
        <p className="mb-2 text-xs text-ink-faint">
          Played at another speed than it was cut, every corner moves by transfer ÷ cut.
        </p>
        <div className="grid grid-cols-[1fr_1fr_auto] items-end gap-2">
          <SmallNumber
            id={`${id}-cut`}
            label="Cut at"
            suffix="rpm"
            value={cutRpm}
            error={!!speedError}
            testId="cut-rpm"
            onChange={(t) => setSpeeds(t, transferRpm)}
          />
          <SmallNumber
            id={`${id}-transfer`}
            label="Transferred at"
            suffix="rpm"
            value={transferRpm}
            error={!!speedError}
            testId="transfer-rpm"
            onChange={(t) => setSpeeds(cutRpm, t)}
          />
          <output
            htmlFor={`${id}-cut ${id}-transfer`}
            className="pb-2 font-mono text-sm text-ink"
            data-testid="speed-ratio"
            aria-label="Speed ratio"
          >
            ×{Number.isFinite(ratio) ? ratio.toFixed(4) : "—"}
          </output>
        </div>
        {speedError ? (
          <p role="alert" className="mt-2 text-xs font-medium text-alarm" data-testid="error-speed">
            {speedError}
          </p>
        ) : null}
      </fieldset>
    </div>
  );
}
