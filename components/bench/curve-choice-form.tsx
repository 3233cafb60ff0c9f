"use client";
/**
 * Choosing the side's playback curve: a preset version from the lab's library,
 * any corner changed for these sides only, the cut and transfer speeds, and the
 * reasons. What it adds up to (the effective curve) is worked out here the same
 * way the server records it, and offered to the plot and the player as "Edits".
 */
import { useQueryClient } from "@tanstack/react-query";
import { useEffect, useId, useMemo, useState } from "react";
import { parseCornerText, parseNumber } from "@/components/curves/corner-fields";
import { formatNumber } from "@/components/curves/plot-format";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { FieldShell, SelectField, TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { usePresets, usePresetVersions } from "@/hooks/use-presets";
import {
  type CornerInput,
  type CornerName,
  CurveError,
  type CurveSpec,
  formatCorner,
  mergeCurve,
  resolveCurve,
} from "@/lib/curves";
import { fetchJson } from "@/lib/http/client";
import { AppError } from "@/lib/http/errors";
import {
  cutSpeedSchema,
  evidenceKinds,
  evidenceLabels,
  transferSpeedSchema,
} from "@/lib/validation/transfers";
import { PitchReference } from "./pitch-reference";
import { emptyMeasurement, type MeasurementDraft, MeasurementField } from "./measurement-field";
import type { CurveChoiceJson, EvidenceKind, SideWithDisc } from "./types";

type Mode = "keep" | "set" | "remove";
interface CornerDraft {
  mode: Mode;
  unit: CornerInput["unit"];
  text: string;
}

const CORNERS: { name: CornerName; title: string; units: CornerInput["unit"][] }[] = [
  { name: "turnover", title: "Bass turnover", units: ["hz", "us"] },
  { name: "shelf", title: "Low-frequency shelf", units: ["hz", "us"] },
  { name: "rolloff", title: "Treble rolloff", units: ["db10k", "us", "hz"] },
  { name: "highpass", title: "Rumble high-pass", units: ["hz", "us"] },
  { name: "ultrasonic", title: "Ultrasonic zero", units: ["hz", "us"] },
];
const UNIT_TEXT: Record<CornerInput["unit"], string> = {
  hz: "Hz",
  us: "µs",
  db10k: "dB attenuation at 10 kHz",
};

const blankCorners = (): Record<CornerName, CornerDraft> =>
  Object.fromEntries(CORNERS.map((c) => [c.name, { mode: "keep", unit: c.units[0], text: "" }])) as Record<
    CornerName,
    CornerDraft
  >;

/** "318 µs (500.5 Hz)" — a corner as the preset gives it, written as everywhere else (lib/curves formatCorner). */
export function describeCorner(c: CornerInput | null | undefined): string {
  return formatCorner(c);
}

function overridesOf(
  corners: Record<CornerName, CornerDraft>,
  ref: { on: boolean; hz: string; db: string },
): Partial<CurveSpec> {
  const out: Partial<CurveSpec> = {};
  for (const c of CORNERS) {
    const d = corners[c.name];
    if (d.mode === "set") out[c.name] = { unit: d.unit, value: parseCornerText(d.unit, d.text) };
    else if (d.mode === "remove") out[c.name] = null;
  }
  if (ref.on) out.reference = { hz: parseNumber(ref.hz), db: parseNumber(ref.db) };
  return out;
}

function draftsFrom(overrides: Partial<CurveSpec>): Record<CornerName, CornerDraft> {
  const d = blankCorners();
  for (const c of CORNERS) {
    const v = overrides[c.name];
    if (v === null) d[c.name] = { ...d[c.name], mode: "remove" };
    else if (v) d[c.name] = { mode: "set", unit: v.unit, text: String(v.value) };
  }
  return d;
}

/**
 * A choice brought over from the listening panel: which curve was picked and what was
 * compared. `nonce` changes with every new pick, so picking twice fills the form twice.
 */
export interface ChoicePrefill {
  nonce: number;
  /** A preset version to choose (its own values), or null to keep the form's curve as it stands. */
  preset: { id: string; version: number } | null;
  overrides?: Partial<CurveSpec>;
  evidence: string;
}

export function CurveChoiceForm({
  data,
  current,
  extraSideIds,
  onEffectiveSpec,
  prefill,
  measuredSpeedRpm = null,
}: {
  data: SideWithDisc;
  current: CurveChoiceJson | null;
  prefill?: ChoicePrefill | null;
  /** The turntable speed the engineer measured and typed when uploading the current flat transfer. */
  measuredSpeedRpm?: number | null;
  /** Sides picked in the catalogue (?sides=…), offered as a third way to apply the choice. */
  extraSideIds: string[];
  onEffectiveSpec: (spec: CurveSpec | null) => void;
}) {
  const uid = useId();
  const queryClient = useQueryClient();
  const { side, disc } = data;
  const presets = usePresets();

  const [presetId, setPresetId] = useState(current?.presetId ?? "");
  const [version, setVersion] = useState<number | null>(current?.presetVersion ?? null);
  const [corners, setCorners] = useState(() => draftsFrom(current?.overrides ?? {}));
  const [ref, setRef] = useState(() => ({
    on: !!current?.overrides.reference,
    hz: String(current?.overrides.reference?.hz ?? 1000),
    db: String(current?.overrides.reference?.db ?? 0),
  }));
  const [cutRpm, setCutRpm] = useState(String(current?.cutSpeedRpm ?? disc.nominalSpeedRpm));
  const [transferRpm, setTransferRpm] = useState(String(current?.transferSpeedRpm ?? disc.nominalSpeedRpm));
  const [correctSpeed, setCorrectSpeed] = useState(current?.correctSpeed ?? false);
  const [rationale, setRationale] = useState("");
  const [evidenceKind, setEvidenceKind] = useState<EvidenceKind | "">("");
  const [evidence, setEvidence] = useState("");
  const [measurement, setMeasurement] = useState<MeasurementDraft>(emptyMeasurement);
  const [applyTo, setApplyTo] = useState<"side" | "disc" | "set">(extraSideIds.length ? "set" : "side");
  const [busy, setBusy] = useState(false);
  const [serverError, setServerError] = useState<{
    message: string;
    fields: Record<string, string[]>;
  } | null>(null);
  const [saved, setSaved] = useState<string | null>(null);

  // A pick from the listening panel: the curve heard, evidence "listening", and what was compared (editable).
  // Applied while rendering, when a new pick arrives (React's way to adjust state to a prop).
  const [appliedPrefill, setAppliedPrefill] = useState<ChoicePrefill | null>(null);
  if ((prefill ?? null) !== appliedPrefill) {
    setAppliedPrefill(prefill ?? null);
    if (prefill) {
      if (prefill.preset) {
        setPresetId(prefill.preset.id);
        setVersion(prefill.preset.version);
        setCorners(draftsFrom(prefill.overrides ?? {}));
        setRef({
          on: !!prefill.overrides?.reference,
          hz: String(prefill.overrides?.reference?.hz ?? 1000),
          db: String(prefill.overrides?.reference?.db ?? 0),
        });
      }
      setEvidenceKind("listening");
      setEvidence(prefill.evidence);
      setSaved(null);
    }
  }

  const versions = usePresetVersions(presetId);
  const preset = presets.data?.presets.find((p) => p.id === presetId) ?? null;
  const chosenVersion = version ?? preset?.currentVersion ?? null;
  const presetSpec: CurveSpec | null = preset
    ? chosenVersion === preset.currentVersion
      ? preset.spec
      : (versions.data?.versions.find((v) => v.version === chosenVersion)?.spec ?? null)
    : null;

  const overrides = useMemo(() => overridesOf(corners, ref), [corners, ref]);
  const cut = parseNumber(cutRpm);
  const transfer = parseNumber(transferRpm);
  const effective = useMemo<{ spec: CurveSpec | null; error: CurveError | null }>(() => {
    if (!preset && Object.keys(overrides).length === 0) return { spec: null, error: null };
    if (preset && !presetSpec) return { spec: null, error: null };
    const spec = mergeCurve(presetSpec, overrides, cut, transfer);
    try {
      resolveCurve(spec);
      return { spec, error: null };
    } catch (err) {
      return { spec: null, error: err instanceof CurveError ? err : new CurveError("spec", String(err)) };
    }
  }, [preset, presetSpec, overrides, cut, transfer]);

  useEffect(() => onEffectiveSpec(effective.spec), [effective.spec, onEffectiveSpec]);

  const errorFor = (p: string) => (effective.error?.parameter === p ? effective.error.message : null);
  const fieldErr = (k: string) => serverError?.fields[k];
  /** The server's errors for a field and everything inside it ("overrides.turnover" holds "overrides.turnover.value"). */
  const fieldErrsUnder = (prefix: string) =>
    Object.entries(serverError?.fields ?? {})
      .filter(([k]) => k === prefix || k.startsWith(`${prefix}.`))
      .flatMap(([, v]) => v);
  // The speeds are read as the engineer types them, with the same sentences the server would give.
  const speedErr = (schema: typeof cutSpeedSchema, text: string) => {
    const r = schema.safeParse(text);
    return r.success ? undefined : r.error.issues.map((i) => i.message);
  };
  const cutErr = speedErr(cutSpeedSchema, cutRpm);
  const transferErr = speedErr(transferSpeedSchema, transferRpm);

  const sideIds =
    applyTo === "side"
      ? [side.id]
      : applyTo === "disc"
        ? disc.sides.map((s) => s.id)
        : Array.from(new Set([side.id, ...extraSideIds]));

  const submit = async () => {
    setBusy(true);
    setServerError(null);
    setSaved(null);
    try {
      const body = {
        sideIds,
        ...(preset && chosenVersion ? { presetId: preset.id, presetVersion: chosenVersion } : {}),
        overrides,
        cutSpeedRpm: cut,
        transferSpeedRpm: transfer,
        correctSpeed: correctSpeed && cut !== transfer,
        rationale,
        evidenceKind: evidenceKind || undefined,
        evidence,
        ...(evidenceKind === "test_disc" ? { measurement } : {}),
      };
      const r = await fetchJson<{ choices: unknown[] }>("/api/curve-choices", {
        method: "POST",
        body: JSON.stringify(body),
      });
      setSaved(`Recorded for ${r.choices.length === 1 ? "this side" : `${r.choices.length} sides`}.`);
      setRationale("");
      setEvidence("");
      setMeasurement(emptyMeasurement);
      for (const key of [["curve-choices", side.id], ["side", side.id], ["queue"]])
        void queryClient.invalidateQueries({ queryKey: key });
    } catch (err) {
      if (err instanceof AppError) setServerError({ message: err.message, fields: err.fields ?? {} });
      else setServerError({ message: String(err), fields: {} });
    } finally {
      setBusy(false);
    }
  };

  const ratio = transfer / cut;
  const otherSides = disc.sides.filter((s) => s.id !== side.id);

  return (
    <form
      className="space-y-5"
      data-testid="curve-choice-form"
      onSubmit={(e) => {
        e.preventDefault();
        void submit();
      }}
    >
      <div className="grid grid-cols-[minmax(0,1fr)_8.5rem] gap-3">
        <SelectField
          id={`${uid}-preset`}
          label="Preset"
          value={presetId}
          data-testid="choice-preset"
          onChange={(e) => {
            setPresetId(e.target.value);
            setVersion(null);
          }}
          hint={preset?.notes ? preset.notes.slice(0, 160) : "Or leave it and give every value below."}
        >
          <option value="">No preset: my own values</option>
          {presets.data?.presets.map((p) => (
            <option key={p.id} value={p.id}>
              {p.name}
            </option>
          ))}
        </SelectField>
        <SelectField
          id={`${uid}-version`}
          label="Version"
          value={chosenVersion ?? ""}
          disabled={!preset}
          data-testid="choice-version"
          onChange={(e) => setVersion(Number(e.target.value))}
        >
          {!preset ? <option value="">—</option> : null}
          {preset && !versions.data ? (
            <option value={preset.currentVersion}>v{preset.currentVersion}</option>
          ) : null}
          {versions.data?.versions.map((v) => (
            <option key={v.version} value={v.version}>
              v{v.version}
              {v.version === preset?.currentVersion ? " (current)" : ""}
            </option>
          ))}
        </SelectField>
      </div>

      <fieldset className="space-y-2">
        <legend className="text-sm font-medium text-ink">Corners for these sides</legend>
        <p className="text-xs text-ink-faint">
          Keep the preset&apos;s value, give another, or take the corner out. Values are at cut speed.
        </p>
        {CORNERS.map((c) => {
          const d = corners[c.name];
          const base = presetSpec?.[c.name];
          const err = errorFor(c.name) ?? (fieldErrsUnder(`overrides.${c.name}`).join(" ") || null);
          const set = (patch: Partial<CornerDraft>) =>
            setCorners((all) => ({ ...all, [c.name]: { ...all[c.name], ...patch } }));
          return (
            <div
              key={c.name}
              className={cx(
                "rounded-lg border px-3 py-2",
                d.mode === "keep" ? "border-paper-edge/80 bg-paper/40" : "border-groove/40 bg-white",
              )}
              data-testid={`override-${c.name}`}
            >
              <div className="flex flex-wrap items-center justify-between gap-2">
                <label htmlFor={`${uid}-${c.name}-mode`} className="text-sm font-semibold text-ink">
                  {c.title}
                </label>
                <select
                  id={`${uid}-${c.name}-mode`}
                  value={d.mode}
                  onChange={(e) => {
                    const mode = e.target.value as Mode;
                    // Start a new value from the preset's, in the unit it was given in.
                    if (mode === "set" && d.text === "" && base)
                      set({ mode, unit: base.unit, text: String(base.value) });
                    else set({ mode });
                  }}
                  className="h-8 rounded-md border border-paper-edge bg-white px-2 text-xs"
                  data-testid={`override-${c.name}-mode`}
                >
                  <option value="keep">{preset ? "As the preset" : "Not used"}</option>
                  <option value="set">Set a value</option>
                  {preset ? <option value="remove">Take it out</option> : null}
                </select>
              </div>
              {d.mode === "keep" ? (
                <p className="mt-0.5 font-mono text-xs text-ink-soft">
                  {preset ? describeCorner(base) : "—"}
                </p>
              ) : d.mode === "remove" ? (
                <p className="mt-0.5 text-xs text-ink-soft">Left out of the curve for these sides.</p>
              ) : (
                <div className="mt-1.5 grid grid-cols-[minmax(0,1fr)_8rem] gap-2">
                  <input
                    type="text"
                    inputMode="decimal"
                    autoComplete="off"
                    aria-label={`${c.title} value`}
                    aria-invalid={err ? true : undefined}
                    value={d.text}
                    onChange={(e) => set({ text: e.target.value })}
                    className={cx(
                      "h-8 rounded-md border bg-white px-2 font-mono text-sm",
                      err ? "border-alarm" : "border-paper-edge",
                    )}
                    data-testid={`override-${c.name}-value`}
                  />
                  <select
                    aria-label={`${c.title} unit`}
                    value={d.unit}
                    onChange={(e) => set({ unit: e.target.value as CornerInput["unit"] })}
                    className="h-8 rounded-md border border-paper-edge bg-white px-2 text-xs"
                  >
                    {c.units.map((u) => (
                      <option key={u} value={u}>
                        {UNIT_TEXT[u]}
                      </option>
                    ))}
                  </select>
                </div>
              )}
              {err ? (
                <p
                  role="alert"
                  className="mt-1 text-xs font-medium text-alarm"
                  data-testid={`choice-error-${c.name}`}
                >
                  {err}
                </p>
              ) : null}
            </div>
          );
        })}
        <div
          className={cx(
            "rounded-lg border px-3 py-2",
            ref.on ? "border-groove/40 bg-white" : "border-paper-edge/80 bg-paper/40",
          )}
        >
          <label className="flex items-center gap-2 text-sm font-semibold text-ink">
            <input
              type="checkbox"
              checked={ref.on}
              onChange={(e) => setRef({ ...ref, on: e.target.checked })}
              className="h-4 w-4 accent-[#2f6f6a]"
            />
            Another level reference
          </label>
          <p className="text-xs text-ink-faint">
            {ref.on
              ? "The curve passes through this gain at this frequency."
              : `As the preset: ${presetSpec?.reference ? `${presetSpec.reference.db} dB at ${presetSpec.reference.hz} Hz` : "0 dB at 1 kHz"}.`}
          </p>
          {ref.on ? (
            <div className="mt-1.5 grid grid-cols-2 gap-2">
              <TextField
                id={`${uid}-ref-hz`}
                label="Frequency (Hz)"
                value={ref.hz}
                onChange={(e) => setRef({ ...ref, hz: e.target.value })}
                inputMode="decimal"
              />
              <TextField
                id={`${uid}-ref-db`}
                label="Gain (dB)"
                value={ref.db}
                onChange={(e) => setRef({ ...ref, db: e.target.value })}
                inputMode="decimal"
              />
            </div>
          ) : null}
          {errorFor("reference") ||
          errorFor("reference.hz") ||
          errorFor("reference.db") ||
          fieldErrsUnder("overrides.reference").length ? (
            <p role="alert" className="mt-1 text-xs font-medium text-alarm">
              {errorFor("reference") ??
                errorFor("reference.hz") ??
                errorFor("reference.db") ??
                fieldErrsUnder("overrides.reference").join(" ")}
            </p>
          ) : null}
        </div>
        {effective.error &&
        !CORNERS.some((c) => c.name === effective.error!.parameter) &&
        !effective.error.parameter.startsWith("reference") &&
        effective.error.parameter !== "speedRatio" ? (
          <p role="alert" className="text-xs font-medium text-alarm">
            {effective.error.message}
          </p>
        ) : null}
        {fieldErr("overrides") ? (
          <p role="alert" className="text-xs font-medium text-alarm">
            {fieldErr("overrides")!.join(" ")}
          </p>
        ) : null}
      </fieldset>

      <fieldset className="space-y-2">
        <legend className="text-sm font-medium text-ink">Speed</legend>
        <div className="grid grid-cols-[1fr_1fr_auto] items-end gap-3">
          <TextField
            id={`${uid}-cut`}
            label="Cut at (rpm)"
            value={cutRpm}
            inputMode="decimal"
            onChange={(e) => setCutRpm(e.target.value)}
            errors={fieldErr("cutSpeedRpm") ?? cutErr}
            data-testid="choice-cut-rpm"
          />
          <TextField
            id={`${uid}-transfer`}
            label="Transferred at (rpm)"
            value={transferRpm}
            inputMode="decimal"
            onChange={(e) => setTransferRpm(e.target.value)}
            errors={fieldErr("transferSpeedRpm") ?? transferErr}
            data-testid="choice-transfer-rpm"
          />
          <output className="pb-2 font-mono text-sm" aria-label="Speed ratio">
            ×{Number.isFinite(ratio) ? ratio.toFixed(4) : "—"}
          </output>
        </div>
        {measuredSpeedRpm && Number.isFinite(measuredSpeedRpm) ? (
          <div
            className="flex flex-wrap items-center gap-2 rounded-md bg-groove-wash/60 px-3 py-2 text-xs"
            data-testid="measured-speed"
          >
            <span>
              Measured at upload: <strong className="font-mono">{formatNumber(measuredSpeedRpm)} rpm</strong>
            </span>
            <Button
              type="button"
              size="sm"
              variant="secondary"
              disabled={Number(transferRpm) === measuredSpeedRpm}
              onClick={() => setTransferRpm(String(measuredSpeedRpm))}
              data-testid="use-measured-transfer"
            >
              Use as “transferred at”
            </Button>
            <Button
              type="button"
              size="sm"
              variant="quiet"
              disabled={Number(cutRpm) === measuredSpeedRpm}
              onClick={() => setCutRpm(String(measuredSpeedRpm))}
              data-testid="use-measured-cut"
            >
              Use as “cut at”
            </Button>
          </div>
        ) : null}
        <p className="text-xs text-ink-faint">
          The disc is logged at {formatNumber(disc.nominalSpeedRpm)} rpm. Played at another speed than it was
          cut, every corner moves by transfer ÷ cut.
        </p>
        {side.currentTransferId && Number.isFinite(transfer) && transfer > 0 ? (
          <PitchReference
            sideId={side.id}
            transferSpeedRpm={transfer}
            onAccept={(rpm) => setCutRpm(String(rpm))}
          />
        ) : null}
        {Number.isFinite(cut) && Number.isFinite(transfer) && cut > 0 && transfer > 0 && cut !== transfer ? (
          <div className="rounded-lg border border-paper-edge bg-white px-3 py-2" data-testid="correct-speed">
            <label className="flex items-center gap-2 text-sm font-semibold text-ink">
              <input
                type="checkbox"
                checked={correctSpeed}
                onChange={(e) => setCorrectSpeed(e.target.checked)}
                className="h-4 w-4 accent-[#2f6f6a]"
                data-testid="choice-correct-speed"
              />
              Correct the speed in the render
            </label>
            <p className="text-xs text-ink-faint">
              {correctSpeed
                ? `The access copy plays as the disc was cut: ${formatNumber(cut)} ÷ ${formatNumber(transfer)} = ×${(cut / transfer).toFixed(4)} ` +
                  `faster, so pitch ${cut > transfer ? "rises" : "falls"} and it lasts ${((transfer / cut) * 100).toFixed(1)} % as long. ` +
                  "The curve is then at the cut speed. The flat transfer is kept as it is."
                : "Left off, the access copy keeps the transfer's speed (and its pitch); only the curve's corners follow the speeds."}
            </p>
            {fieldErr("correctSpeed") ? (
              <p role="alert" className="mt-1 text-xs font-medium text-alarm">
                {fieldErr("correctSpeed")!.join(" ")}
              </p>
            ) : null}
          </div>
        ) : null}
        {errorFor("speedRatio") && !cutErr && !transferErr ? (
          <p role="alert" className="text-xs font-medium text-alarm">
            {errorFor("speedRatio")}
          </p>
        ) : null}
      </fieldset>

      <FieldShell
        id={`${uid}-rationale`}
        label="Why this curve"
        errors={fieldErr("rationale")}
        hint="At least a sentence: what you heard, read or measured."
      >
        <textarea
          id={`${uid}-rationale`}
          value={rationale}
          onChange={(e) => setRationale(e.target.value)}
          rows={3}
          aria-invalid={fieldErr("rationale") ? true : undefined}
          className={cx(
            "block w-full rounded-md border bg-white px-3 py-2 text-sm",
            fieldErr("rationale") ? "border-alarm" : "border-paper-edge",
          )}
          data-testid="choice-rationale"
        />
      </FieldShell>
      <SelectField
        id={`${uid}-evidence-kind`}
        label="It rests on"
        value={evidenceKind}
        onChange={(e) => setEvidenceKind(e.target.value as EvidenceKind)}
        errors={fieldErr("evidenceKind")}
        data-testid="choice-evidence-kind"
      >
        <option value="">Choose…</option>
        {evidenceKinds.map((k) => (
          <option key={k} value={k}>
            {evidenceLabels[k]}
          </option>
        ))}
      </SelectField>
      {evidenceKind === "test_disc" ? (
        <MeasurementField
          value={measurement}
          onChange={setMeasurement}
          chosen={effective.spec}
          errors={fieldErrsUnder("measurement")}
        />
      ) : null}
      <FieldShell
        id={`${uid}-evidence`}
        label="Evidence (optional)"
        hint="A citation, the test disc and its measurement, the sleeve note…"
        errors={fieldErr("evidence")}
      >
        <textarea
          id={`${uid}-evidence`}
          value={evidence}
          onChange={(e) => setEvidence(e.target.value)}
          rows={2}
          className="block w-full rounded-md border border-paper-edge bg-white px-3 py-2 text-sm"
          data-testid="choice-evidence"
        />
      </FieldShell>

      <fieldset className="space-y-1.5">
        <legend className="text-sm font-medium text-ink">Apply to</legend>
        <label className="flex items-center gap-2 text-sm">
          <input
            type="radio"
            name={`${uid}-apply`}
            checked={applyTo === "side"}
            onChange={() => setApplyTo("side")}
            className="accent-[#2f6f6a]"
            data-testid="apply-side"
          />
          This side ({side.designation})
        </label>
        {otherSides.length ? (
          <label className="flex items-center gap-2 text-sm">
            <input
              type="radio"
              name={`${uid}-apply`}
              checked={applyTo === "disc"}
              onChange={() => setApplyTo("disc")}
              className="accent-[#2f6f6a]"
              data-testid="apply-disc"
            />
            Every side of this disc ({disc.sides.map((s) => s.designation).join(", ")})
          </label>
        ) : null}
        {extraSideIds.length ? (
          <label className="flex items-center gap-2 text-sm">
            <input
              type="radio"
              name={`${uid}-apply`}
              checked={applyTo === "set"}
              onChange={() => setApplyTo("set")}
              className="accent-[#2f6f6a]"
              data-testid="apply-set"
            />
            The {new Set([side.id, ...extraSideIds]).size} sides picked in the catalogue
          </label>
        ) : null}
        {fieldErr("sideIds") ? (
          <p className="text-xs font-medium text-alarm">{fieldErr("sideIds")!.join(" ")}</p>
        ) : null}
      </fieldset>

      {serverError ? (
        <Notice tone="error" title="Not recorded" testId="choice-error">
          {serverError.message}
        </Notice>
      ) : null}
      {saved ? (
        <Notice tone="success" testId="choice-saved">
          {saved}
        </Notice>
      ) : null}
      <Button type="submit" disabled={busy || !effective.spec} data-testid="record-choice" className="w-full">
        {busy ? "Recording…" : "Record this choice"}
      </Button>
    </form>
  );
}
