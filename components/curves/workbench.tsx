"use client";
/**
 * The curve workbench: edit a playback curve's corners and see it respond as
 * you type, compare it with presets or pinned snapshots, check the digital
 * filter at a transfer's sample rate, fit it to a table of points, and save it
 * as a preset or a new version of one. All curve maths runs in the browser
 * with lib/curves; the server checks again on save.
 */
import Link from "next/link";
import { useCallback, useEffect, useMemo, useRef, useState } from "react";
import { Badge } from "@/components/ui/badge";
import { Notice } from "@/components/ui/notice";
import { Panel } from "@/components/ui/panel";
import { usePreset, useSavePreset } from "@/hooks/use-presets";
import { useUrlState } from "@/hooks/use-url-state";
import { CurveError, type CurveDescription, type CurveSpec, describeCurve, RIAA_SPEC } from "@/lib/curves";
import { CornerFields, type FieldError } from "./corner-fields";
import { DeviationPlot } from "./deviation-plot";
import { FitPanel, type FitPoints } from "./fit-panel";
import { CURVE_COLORS, formatDb } from "./plot-format";
import { type PlotCurve, ResponsePlot } from "./response-plot";
import { SummaryStrip } from "./summary-strip";
import type { PresetJson } from "./types";
import { ComparePanel, useCompareSlots } from "./workbench-compare";
import { emptyCorrection, type PresetText, SaveForm, VersionHistory } from "./workbench-save";

const SAMPLE_RATES = [44_100, 48_000, 88_200, 96_000, 176_400, 192_000];

/** Parameters CornerFields marks beside their own field; any other error gets a notice of its own. */
const FIELD_PARAMETERS = [
  "turnover",
  "shelf",
  "rolloff",
  "highpass",
  "ultrasonic",
  "reference",
  "reference.hz",
  "reference.db",
  "speedRatio",
];

export function Workbench({ canEdit }: { canEdit: boolean }) {
  const [presetId, setPresetId] = useUrlState("preset");
  const curve = useCurveDraft();
  const [text, setText] = useState<PresetText>({ name: "", notes: "", changeNote: "", ...emptyCorrection });
  const compare = useCompareSlots();
  const [fitPoints, setFitPoints] = useState<FitPoints | null>(null);
  const applied = useRef<string | null>(null);

  const presetQuery = usePreset(presetId);
  const loaded = presetId ? presetQuery.data?.preset : undefined;
  const { replaceSpec } = curve;
  // Put a preset into the editor once per version fetched (a save that created that version sets `applied` itself).
  useEffect(() => {
    if (!loaded) return;
    const key = `${loaded.id}:${loaded.version}`;
    if (applied.current === key) return;
    applied.current = key;
    replaceSpec(loaded.spec);
    setText({ name: loaded.name, notes: loaded.notes, changeNote: "", ...emptyCorrection });
  }, [loaded, replaceSpec]);

  const saving = useSavePreset((saved) => {
    applied.current = `${saved.id}:${saved.version}`;
    setText((t) => ({ ...t, changeNote: "", ...emptyCorrection }));
    if (saved.id !== presetId) setPresetId(saved.id);
  });
  const save = (asNewVersion: boolean) => {
    const { corrects, correctionNote, ...rest } = text;
    saving.mutate({
      presetId: asNewVersion ? presetId : undefined,
      spec: curve.spec,
      ...rest,
      // A correction is of this preset's own earlier versions: only with a new version.
      ...(asNewVersion && corrects.length ? { corrects, correctionNote } : {}),
    });
  };

  const editingLabel = loaded ? `${text.name || loaded.name} (editing)` : "This curve";
  const plotCurves: PlotCurve[] = useMemo(
    () => [
      { label: editingLabel, spec: curve.shownSpec, color: CURVE_COLORS[0] },
      ...compare.slots.map((c, i) => ({ label: c.label, spec: c.spec, color: CURVE_COLORS[i + 1] })),
    ],
    [editingLabel, curve.shownSpec, compare.slots],
  );

  return (
    <div className="space-y-6" data-testid="workbench">
      <WorkbenchStatus
        presetId={presetId}
        query={presetQuery}
        loaded={loaded}
        onStartNew={() => setPresetId("")}
      />

      <div className="grid gap-6 xl:grid-cols-[21rem_minmax(0,1fr)]">
        <aside aria-label="Corners of the curve" className="space-y-3">
          <h2 className="font-sans text-sm font-semibold uppercase tracking-wide text-ink-soft">Corners</h2>
          <CornerFields
            key={curve.fieldsKey}
            spec={curve.spec}
            onChange={curve.setSpec}
            error={curve.error}
          />
          {curve.error && !FIELD_PARAMETERS.includes(curve.error.parameter) ? (
            <Notice tone="error" title="This curve cannot be built">
              {curve.error.message}
            </Notice>
          ) : null}
        </aside>

        <div className="min-w-0 space-y-4">
          <SummaryStrip desc={curve.shownDesc} stale={!!curve.error} />
          <LevelCaution peakGainDb={curve.shownDesc?.peakGainDb ?? 0} />
          <Panel title="Response">
            {curve.error ? (
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
            <ComparePanel
              editingLabel={editingLabel}
              compare={compare}
              spec={curve.spec}
              canPin={!curve.error}
              onEdit={replaceSpec}
            />
          </Panel>
        </div>
      </div>

      <DigitalFilterPanel spec={curve.shownSpec} />

      <Panel title="Fit to a table of points">
        <FitPanel spec={curve.shownSpec} onLoad={replaceSpec} onPoints={setFitPoints} />
      </Panel>

      <div className="grid gap-6 lg:grid-cols-2">
        <Panel title="Save">
          {canEdit ? (
            <SaveForm
              text={text}
              onText={(change) => setText((t) => ({ ...t, ...change }))}
              loaded={loaded}
              blocked={!!curve.error}
              saving={saving}
              onSave={save}
            />
          ) : (
            <p className="text-sm text-ink-soft">
              Your role can look at curves and try changes here, but not save presets. Ask a transfer engineer
              to save a curve you have worked out.
            </p>
          )}
        </Panel>
        <Panel title="Version history">
          <VersionHistory
            presetId={presetId}
            loaded={loaded}
            canCompare={!compare.full}
            onEdit={replaceSpec}
            onCompare={compare.add}
          />
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

/**
 * The curve being edited, checked as it is typed: `spec` as the fields hold it, its
 * `error` if lib/curves refuses it, and `shownSpec`, the last curve that could be built,
 * for the plots. `replaceSpec` puts a whole curve in and redraws the fields from it.
 */
function useCurveDraft() {
  const [spec, setSpec] = useState<CurveSpec>(RIAA_SPEC);
  const [fieldsKey, setFieldsKey] = useState(0);
  const check = useMemo(() => checkSpec(spec), [spec]);
  const [lastGood, setLastGood] = useState<CurveSpec>(RIAA_SPEC);
  if (!check.error && lastGood !== spec) setLastGood(spec);
  const shownSpec = check.error ? lastGood : spec;
  const shownDesc = useMemo(() => checkSpec(shownSpec).desc, [shownSpec]);
  const replaceSpec = useCallback((next: CurveSpec) => {
    setSpec(next);
    setFieldsKey((k) => k + 1);
  }, []);
  return { spec, setSpec, replaceSpec, fieldsKey, error: check.error, shownSpec, shownDesc };
}

function WorkbenchStatus({
  presetId,
  query,
  loaded,
  onStartNew,
}: {
  presetId: string;
  query: ReturnType<typeof usePreset>;
  loaded: PresetJson | undefined;
  onStartNew: () => void;
}) {
  return (
    <div className="flex flex-wrap items-center gap-3 text-sm" data-testid="workbench-status">
      {!presetId ? (
        <>
          <Badge tone="accent">New curve</Badge>
          <span className="text-ink-soft">
            Started from RIAA (3180 / 318 / 75 µs). Change any corner; the plot follows as you type.
          </span>
        </>
      ) : query.isLoading ? (
        <span className="text-ink-faint">Loading the preset…</span>
      ) : query.error ? (
        <Notice tone="error" title="The preset could not be loaded">
          {query.error.message}
        </Notice>
      ) : loaded ? (
        <>
          <Badge tone="groove">Preset</Badge>
          <span>
            Editing <strong className="font-semibold">{loaded.name}</strong>, version {loaded.version}
          </span>
          <button
            type="button"
            onClick={onStartNew}
            className="text-shellac-deep underline-offset-2 hover:underline"
          >
            Start a new curve instead
          </button>
        </>
      ) : null}
    </div>
  );
}

function LevelCaution({ peakGainDb }: { peakGainDb: number }) {
  return (
    <Notice
      tone="caution"
      title={
        peakGainDb > 12
          ? `This curve lifts the bass by up to ${formatDb(peakGainDb)}`
          : "Mind the level when you listen"
      }
      testId="loudness-caution"
    >
      Large bass gain can be very loud in headphones and can harm hearing and loudspeakers. Start playback low
      and raise it slowly.
    </Notice>
  );
}

/** The digital filters against the analog curve at a transfer's sample rate. */
function DigitalFilterPanel({ spec }: { spec: CurveSpec }) {
  const [sampleRateHz, setSampleRateHz] = useState(96_000);
  // The filter design takes tens of milliseconds; let typing settle first.
  const settledSpec = useSettled(spec, 250);
  return (
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
  );
}
