"use client";
/**
 * The curve workbench: edit a playback curve's corners and see it respond as
 * you type, compare it with presets or pinned snapshots, check the digital
 * filter at a transfer's sample rate, fit it to a table of points, and save it
 * as a preset or a new version of one. All curve maths runs in the browser
 * with lib/curves; the server checks again on save.
 */
import { useQuery, useQueryClient } from "@tanstack/react-query";
import Link from "next/link";
import { useEffect, useMemo, useRef, useState, useTransition } from "react";
import { savePresetAction } from "@/app/(lab)/curves/actions";
import { when } from "@/components/catalogue/format";
import { Badge } from "@/components/ui/badge";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { controlClass, TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { Panel } from "@/components/ui/panel";
import { usePresets, usePresetVersions } from "@/hooks/use-presets";
import { useUrlState } from "@/hooks/use-url-state";
import {
  analogGainDb,
  analogModel,
  CurveError,
  type CurveSpec,
  type CurveDescription,
  describeCurve,
  RIAA_SPEC,
} from "@/lib/curves";
import { fetchJson } from "@/lib/http/client";
import { CornerFields, type FieldError } from "./corner-fields";
import { DeviationPlot } from "./deviation-plot";
import { FitPanel, type FitPoints } from "./fit-panel";
import { CORNER_WORDS, CURVE_COLORS, formatDb, formatHz, formatNumber } from "./plot-format";
import { type PlotCurve, ResponsePlot } from "./response-plot";
import type { PresetJson } from "./types";

const SAMPLE_RATES = [44_100, 48_000, 88_200, 96_000, 176_400, 192_000];
const MAX_COMPARE = 3;

/** A value that follows `value` once it has stopped changing for `ms`. */
function useSettled<T>(value: T, ms: number): T {
  const [settled, setSettled] = useState(value);
  useEffect(() => {
    const t = setTimeout(() => setSettled(value), ms);
    return () => clearTimeout(t);
  }, [value, ms]);
  return settled;
}

function checkSpec(
  spec: CurveSpec,
): { desc: CurveDescription; error: null } | { desc: null; error: FieldError } {
  try {
    return { desc: describeCurve(spec), error: null };
  } catch (err) {
    if (err instanceof CurveError)
      return { desc: null, error: { parameter: err.parameter, message: err.message } };
    return {
      desc: null,
      error: { parameter: "spec", message: err instanceof Error ? err.message : String(err) },
    };
  }
}

interface CompareSlot {
  key: string;
  label: string;
  spec: CurveSpec;
}

export function Workbench({ canEdit }: { canEdit: boolean }) {
  const queryClient = useQueryClient();
  const [presetId, setPresetId] = useUrlState("preset");
  const [spec, setSpec] = useState<CurveSpec>(RIAA_SPEC);
  const [fieldsKey, setFieldsKey] = useState(0);
  const [name, setName] = useState("");
  const [notes, setNotes] = useState("");
  const [changeNote, setChangeNote] = useState("");
  const [sampleRateHz, setSampleRateHz] = useState(96_000);
  const [compare, setCompare] = useState<CompareSlot[]>([]);
  const [pick, setPick] = useState("");
  const [fitPoints, setFitPoints] = useState<FitPoints | null>(null);
  const [saveResult, setSaveResult] = useState<{
    ok: boolean;
    message: string;
    fields?: Record<string, string[]>;
  } | null>(null);
  const [saving, startSaving] = useTransition();
  const applied = useRef<string | null>(null);

  const presetQuery = useQuery({
    queryKey: ["curve-preset", presetId],
    queryFn: () => fetchJson<{ preset: PresetJson }>(`/api/curves/presets/${encodeURIComponent(presetId)}`),
    enabled: !!presetId,
  });
  const versionsQuery = usePresetVersions(presetId);
  const libraryQuery = usePresets();
  const loaded = presetId ? presetQuery.data?.preset : undefined;

  // Put a preset into the editor once per version fetched (a save that created that version sets `applied` itself).
  useEffect(() => {
    if (!loaded) return;
    const key = `${loaded.id}:${loaded.version}`;
    if (applied.current === key) return;
    applied.current = key;
    setSpec(loaded.spec);
    setName(loaded.name);
    setNotes(loaded.notes);
    setChangeNote("");
    setFieldsKey((k) => k + 1);
  }, [loaded]);

  const replaceSpec = (next: CurveSpec) => {
    setSpec(next);
    setFieldsKey((k) => k + 1);
  };

  const check = useMemo(() => checkSpec(spec), [spec]);
  const [lastGood, setLastGood] = useState<CurveSpec>(RIAA_SPEC);
  if (!check.error && lastGood !== spec) setLastGood(spec);
  const shownSpec = check.error ? lastGood : spec;
  const shownDesc = useMemo(() => checkSpec(shownSpec).desc, [shownSpec]);
  // The filter design takes tens of milliseconds; let typing settle first.
  const settledSpec = useSettled(shownSpec, 250);

  const editingLabel = loaded ? `${name || loaded.name} (editing)` : "This curve";
  const plotCurves: PlotCurve[] = useMemo(
    () => [
      { label: editingLabel, spec: shownSpec, color: CURVE_COLORS[0] },
      ...compare.map((c, i) => ({ label: c.label, spec: c.spec, color: CURVE_COLORS[i + 1] })),
    ],
    [editingLabel, shownSpec, compare],
  );

  const addCompare = (slot: Omit<CompareSlot, "key">) => {
    setCompare((cur) =>
      cur.length >= MAX_COMPARE
        ? cur
        : [...cur, { ...slot, key: `${Date.now()}-${Math.random().toString(36).slice(2, 6)}` }],
    );
  };

  const save = (asNewVersion: boolean) => {
    setSaveResult(null);
    startSaving(async () => {
      const r = await savePresetAction({
        presetId: asNewVersion ? presetId : undefined,
        name,
        spec,
        notes,
        changeNote,
      });
      setSaveResult(r);
      if (r.ok) {
        applied.current = `${r.presetId}:${r.version}`;
        setChangeNote("");
        await queryClient.invalidateQueries({ queryKey: ["curve-presets"] });
        await queryClient.invalidateQueries({ queryKey: ["curve-preset", r.presetId] });
        await queryClient.invalidateQueries({ queryKey: ["curve-preset-versions", r.presetId] });
        if (r.presetId !== presetId) setPresetId(r.presetId);
      }
    });
  };

  const fieldErrors = saveResult && !saveResult.ok ? (saveResult.fields ?? {}) : {};
  const peak = shownDesc?.peakGainDb ?? 0;

  return (
    <div className="space-y-6" data-testid="workbench">
      <div className="flex flex-wrap items-center gap-3 text-sm" data-testid="workbench-status">
        {presetId ? (
          presetQuery.isLoading ? (
            <span className="text-ink-faint">Loading the preset…</span>
          ) : presetQuery.error ? (
            <Notice tone="error" title="The preset could not be loaded">
              {presetQuery.error.message}
            </Notice>
          ) : loaded ? (
            <>
              <Badge tone="groove">Preset</Badge>
              <span>
                Editing <strong className="font-semibold">{loaded.name}</strong>, version {loaded.version}
              </span>
              <button
                type="button"
                onClick={() => setPresetId("")}
                className="text-shellac-deep underline-offset-2 hover:underline"
              >
                Start a new curve instead
              </button>
            </>
          ) : null
        ) : (
          <>
            <Badge tone="accent">New curve</Badge>
            <span className="text-ink-soft">
              Started from RIAA (3180 / 318 / 75 µs). Change any corner; the plot follows as you type.
            </span>
          </>
        )}
      </div>

      <div className="grid gap-6 xl:grid-cols-[21rem_minmax(0,1fr)]">
        <aside aria-label="Corners of the curve" className="space-y-3">
          <h2 className="font-sans text-sm font-semibold uppercase tracking-wide text-ink-soft">Corners</h2>
          <CornerFields key={fieldsKey} spec={spec} onChange={setSpec} error={check.error} />
          {check.error &&
          ![
            "turnover",
            "shelf",
            "rolloff",
            "highpass",
            "ultrasonic",
            "reference",
            "reference.hz",
            "reference.db",
            "speedRatio",
          ].includes(check.error.parameter) ? (
            <Notice tone="error" title="This curve cannot be built">
              {check.error.message}
            </Notice>
          ) : null}
        </aside>

        <div className="min-w-0 space-y-4">
          <SummaryStrip desc={shownDesc} stale={!!check.error} />
          <Notice
            tone="caution"
            title={
              peak > 12
                ? `This curve lifts the bass by up to ${formatDb(peak)}`
                : "Mind the level when you listen"
            }
            testId="loudness-caution"
          >
            Large bass gain can be very loud in headphones and can harm hearing and loudspeakers. Start
            playback low and raise it slowly.
          </Notice>
          <Panel title="Response">
            {check.error ? (
              <p className="mb-3 rounded-md bg-alarm-wash px-3 py-2 text-sm text-ink" role="status">
                Showing the last curve that could be built; fix the field marked in red to update it.
              </p>
            ) : null}
            <ResponsePlot
              curves={plotCurves}
              points={fitPoints?.points}
              pointsLabel={fitPoints?.label}
              height={500}
            />
          </Panel>

          <Panel title="Compare">
            <div className="space-y-3" data-testid="compare">
              <ul className="space-y-2">
                <li className="flex items-center gap-3 text-sm">
                  <Swatch color={CURVE_COLORS[0]} />
                  <span className="font-semibold">{editingLabel}</span>
                  <span className="text-ink-faint">always shown</span>
                </li>
                {compare.map((c, i) => (
                  <li
                    key={c.key}
                    className="flex flex-wrap items-center gap-3 text-sm"
                    data-testid="compare-slot"
                  >
                    <Swatch color={CURVE_COLORS[i + 1]} />
                    <span className="min-w-0 flex-1 truncate">{c.label}</span>
                    <Button type="button" variant="quiet" size="sm" onClick={() => replaceSpec(c.spec)}>
                      Edit this one
                    </Button>
                    <Button
                      type="button"
                      variant="quiet"
                      size="sm"
                      aria-label={`Remove ${c.label} from the comparison`}
                      onClick={() => setCompare((cur) => cur.filter((x) => x.key !== c.key))}
                    >
                      Remove
                    </Button>
                  </li>
                ))}
              </ul>
              <div className="flex flex-wrap items-end gap-2 border-t border-paper-edge pt-3">
                <div className="min-w-56 flex-1 space-y-1">
                  <label htmlFor="compare-pick" className="block text-xs font-medium text-ink-soft">
                    A preset from the library
                  </label>
                  <select
                    id="compare-pick"
                    value={pick}
                    onChange={(e) => setPick(e.target.value)}
                    className="h-9 w-full rounded-md border border-paper-edge bg-white px-2 text-sm"
                    data-testid="compare-pick"
                  >
                    <option value="">
                      {libraryQuery.isLoading
                        ? "Loading…"
                        : libraryQuery.data?.presets.length
                          ? "Choose a preset…"
                          : "No presets yet"}
                    </option>
                    {libraryQuery.data?.presets.map((p) => (
                      <option key={p.id} value={p.id}>
                        {p.name} (v{p.version})
                      </option>
                    ))}
                  </select>
                </div>
                <Button
                  type="button"
                  variant="secondary"
                  size="sm"
                  disabled={!pick || compare.length >= MAX_COMPARE}
                  onClick={() => {
                    const p = libraryQuery.data?.presets.find((x) => x.id === pick);
                    if (p) addCompare({ label: `${p.name} v${p.version}`, spec: p.spec });
                    setPick("");
                  }}
                >
                  Add to comparison
                </Button>
                <Button
                  type="button"
                  variant="secondary"
                  size="sm"
                  disabled={!!check.error || compare.length >= MAX_COMPARE}
                  onClick={() =>
                    addCompare({
                      label: `Snapshot ${new Date().toLocaleTimeString("en-GB", { hour: "2-digit", minute: "2-digit", second: "2-digit" })}`,
                      spec,
                    })
                  }
                  data-testid="compare-pin"
                >
                  Pin this curve as it is now
                </Button>
              </div>
              <p className="text-xs text-ink-faint">
                Up to {MAX_COMPARE} curves beside the one you are editing. The straight-line approximation is
                drawn for the edited curve only.
              </p>
            </div>
          </Panel>
        </div>
      </div>

      <Panel
        title="Digital filter"
        actions={
          <div className="flex items-center gap-2">
            <label htmlFor="sample-rate" className="text-sm text-ink-soft">
              Transfer&apos;s sample rate
            </label>
            <select
              id="sample-rate"
              value={sampleRateHz}
              onChange={(e) => setSampleRateHz(Number(e.target.value))}
              className="h-8 rounded-md border border-paper-edge bg-white px-2 font-mono text-sm"
              data-testid="sample-rate"
            >
              {SAMPLE_RATES.map((r) => (
                <option key={r} value={r}>
                  {(r / 1000).toFixed(1)} kHz
                </option>
              ))}
            </select>
          </div>
        }
      >
        <p className="mb-3 text-sm text-ink-soft">
          How closely the digital filters follow the analog curve at a transfer&apos;s sample rate: the filter
          that renders the access copies, and the sections the bench listens through.
        </p>
        <DeviationPlot spec={settledSpec} sampleRateHz={sampleRateHz} />
      </Panel>

      <Panel title="Fit to a table of points">
        <FitPanel spec={shownSpec} onLoad={replaceSpec} onPoints={setFitPoints} />
      </Panel>

      <div className="grid gap-6 lg:grid-cols-2">
        <Panel title="Save">
          {canEdit ? (
            <form
              className="space-y-4"
              onSubmit={(e) => {
                e.preventDefault();
                save(!!loaded);
              }}
              data-testid="save-form"
            >
              <TextField
                id="save-name"
                label="Name"
                value={name}
                onChange={(e) => setName(e.target.value)}
                errors={fieldErrors.name}
                placeholder="e.g. Lacquer house curve, 1949"
                data-testid="save-name"
              />
              <div className="space-y-1.5">
                <label htmlFor="save-notes" className="block text-sm font-medium">
                  Notes <span className="font-normal text-ink-faint">(source, which discs it suits)</span>
                </label>
                <textarea
                  id="save-notes"
                  value={notes}
                  onChange={(e) => setNotes(e.target.value)}
                  rows={3}
                  className={controlClass(false)}
                  data-testid="save-notes"
                />
              </div>
              <TextField
                id="save-change-note"
                label="Why this change (required)"
                value={changeNote}
                onChange={(e) => setChangeNote(e.target.value)}
                errors={fieldErrors.changeNote}
                hint="Kept with the version, so a later curator knows why."
                data-testid="save-change-note"
              />
              {fieldErrors.spec ? (
                <p className="text-xs font-medium text-alarm">{fieldErrors.spec.join(" ")}</p>
              ) : null}
              <div className="flex flex-wrap gap-2">
                {loaded ? (
                  <Button
                    type="button"
                    disabled={saving || !!check.error}
                    onClick={() => save(true)}
                    data-testid="save-new-version"
                  >
                    Save as version {loaded.currentVersion + 1}
                  </Button>
                ) : null}
                <Button
                  type="button"
                  variant={loaded ? "secondary" : "primary"}
                  disabled={saving || !!check.error}
                  onClick={() => save(false)}
                  data-testid="save-new-preset"
                >
                  Save as new preset
                </Button>
                {saving ? <span className="self-center text-sm text-ink-faint">Saving…</span> : null}
              </div>
              {check.error ? <p className="text-xs text-ink-faint">Fix the curve before saving.</p> : null}
              {saveResult ? (
                <Notice tone={saveResult.ok ? "success" : "error"} testId="save-result">
                  {saveResult.message}
                </Notice>
              ) : null}
            </form>
          ) : (
            <p className="text-sm text-ink-soft">
              Your role can look at curves and try changes here, but not save presets. Ask a transfer engineer
              to save a curve you have worked out.
            </p>
          )}
        </Panel>

        <Panel title="Version history">
          {!presetId ? (
            <p className="text-sm text-ink-faint">
              A saved preset keeps every version with who saved it, when and why. Open one from the library to
              see its history.
            </p>
          ) : versionsQuery.isLoading ? (
            <p className="text-sm text-ink-faint">Loading…</p>
          ) : versionsQuery.error ? (
            <p className="text-sm text-alarm">{versionsQuery.error.message}</p>
          ) : (
            <ol className="space-y-3" data-testid="version-history">
              {[...(versionsQuery.data?.versions ?? [])]
                .sort((a, b) => b.version - a.version)
                .map((v) => (
                  <li
                    key={v.version}
                    className={cx(
                      "rounded-lg border px-3 py-2",
                      loaded && v.version === loaded.version
                        ? "border-groove/40 bg-groove-wash/40"
                        : "border-paper-edge",
                    )}
                  >
                    <div className="flex flex-wrap items-baseline gap-x-3 gap-y-1">
                      <span className="font-mono text-sm font-semibold">v{v.version}</span>
                      <span className="text-sm font-medium">{v.name}</span>
                      <span className="text-xs text-ink-faint">
                        {v.createdBy ?? "no person recorded"} ·{" "}
                        <time dateTime={v.createdAt}>{when(v.createdAt)}</time>
                      </span>
                    </div>
                    <p className="mt-1 text-sm text-ink-soft">{v.changeNote}</p>
                    <div className="mt-1 flex gap-1">
                      <Button type="button" variant="quiet" size="sm" onClick={() => replaceSpec(v.spec)}>
                        Put v{v.version} in the editor
                      </Button>
                      <Button
                        type="button"
                        variant="quiet"
                        size="sm"
                        disabled={compare.length >= MAX_COMPARE}
                        onClick={() => addCompare({ label: `${v.name} v${v.version}`, spec: v.spec })}
                      >
                        Compare
                      </Button>
                    </div>
                  </li>
                ))}
            </ol>
          )}
        </Panel>
      </div>
      <p className="text-sm">
        <Link href="/curves" className="text-shellac-deep underline-offset-2 hover:underline">
          ← Back to the curve library
        </Link>
      </p>
    </div>
  );
}

function Swatch({ color }: { color: string }) {
  return <span aria-hidden className="inline-block h-1 w-5 shrink-0 rounded" style={{ background: color }} />;
}

function SummaryStrip({ desc, stale }: { desc: CurveDescription | null; stale: boolean }) {
  const gains = useMemo(() => {
    if (!desc) return null;
    const model = analogModel(desc.curve.spec);
    return { at20: analogGainDb(model, 20), at20k: analogGainDb(model, 20_000) };
  }, [desc]);
  if (!desc || !gains) return null;
  const c = desc.curve;
  const taus = (["shelf", "turnover", "rolloff", "highpass", "ultrasonic"] as const).flatMap((n) =>
    c[n] ? [{ n, tau: c[n].filterTauUs }] : [],
  );
  return (
    <dl
      className={cx(
        "grid grid-cols-2 gap-px overflow-hidden rounded-xl border border-paper-edge bg-paper-edge text-sm md:grid-cols-4",
        stale && "opacity-60",
      )}
      data-testid="curve-summary"
    >
      <div className="bg-white px-4 py-2.5">
        <dt className="text-xs text-ink-soft">Peak gain</dt>
        <dd className="font-mono text-lg font-semibold" data-testid="summary-peak">
          {formatDb(desc.peakGainDb, 2)}
        </dd>
        <dd className="text-xs text-ink-faint">at {formatHz(desc.peakHz)}</dd>
      </div>
      <div className="bg-white px-4 py-2.5">
        <dt className="text-xs text-ink-soft">Gain at 20 Hz</dt>
        <dd className="font-mono text-lg font-semibold">{formatDb(gains.at20, 2)}</dd>
      </div>
      <div className="bg-white px-4 py-2.5">
        <dt className="text-xs text-ink-soft">Gain at 20 kHz</dt>
        <dd className="font-mono text-lg font-semibold">{formatDb(gains.at20k, 2)}</dd>
      </div>
      <div className="bg-white px-4 py-2.5">
        <dt className="text-xs text-ink-soft">
          Time constants{c.speedRatio !== 1 ? ` at ×${c.speedRatio.toFixed(3)}` : ""}
        </dt>
        <dd className="space-y-0.5 pt-0.5 font-mono text-xs" data-testid="summary-taus">
          {taus.length ? (
            taus.map((t) => (
              <span key={t.n} className="mr-2 inline-block whitespace-nowrap">
                <span className="font-sans text-ink-faint">{CORNER_WORDS[t.n]}</span> {formatNumber(t.tau, 4)}{" "}
                µs
              </span>
            ))
          ) : (
            <span className="font-sans text-ink-faint">none: flat</span>
          )}
        </dd>
      </div>
    </dl>
  );
}
