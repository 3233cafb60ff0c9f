"use client";
/** The workbench's save form and the loaded preset's version history. */
import Link from "next/link";
import { when } from "@/components/catalogue/format";
import { Badge } from "@/components/ui/badge";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { controlClass, TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { usePresetVersions, type useSavePreset } from "@/hooks/use-presets";
import type { CurveSpec } from "@/lib/curves";
import { AppError } from "@/lib/http/errors";
import type { PresetJson } from "./types";

/** What the save form holds besides the curve. */
export interface PresetText {
  name: string;
  notes: string;
  changeNote: string;
  /** Earlier versions the new version corrects (values known to be wrong), with the note saying why. */
  corrects: number[];
  correctionNote: string;
}

export const emptyCorrection = { corrects: [] as number[], correctionNote: "" };

/** "This version corrects…": which earlier versions were wrong, and on what evidence. */
function CorrectionFields({
  text,
  onText,
  currentVersion,
  errors,
}: {
  text: PresetText;
  onText: (change: Partial<PresetText>) => void;
  currentVersion: number;
  errors: Record<string, string[]>;
}) {
  const versions = Array.from({ length: currentVersion }, (_, i) => i + 1);
  return (
    <fieldset
      className="space-y-2 rounded-lg border border-paper-edge bg-paper/40 px-3 py-2.5"
      data-testid="correction-fields"
    >
      <legend className="px-1 text-sm font-medium">
        Corrects earlier versions{" "}
        <span className="font-normal text-ink-faint">(only if their values were wrong)</span>
      </legend>
      <div className="flex flex-wrap gap-3">
        {versions.map((v) => (
          <label key={v} className="inline-flex items-center gap-1.5 text-sm">
            <input
              type="checkbox"
              className="h-4 w-4 accent-shellac"
              checked={text.corrects.includes(v)}
              onChange={(e) =>
                onText({
                  corrects: e.target.checked
                    ? [...text.corrects, v].sort((a, b) => a - b)
                    : text.corrects.filter((x) => x !== v),
                })
              }
              data-testid={`corrects-${v}`}
            />
            <span className="font-mono">v{v}</span>
          </label>
        ))}
      </div>
      {errors.corrects ? <p className="text-xs font-medium text-alarm">{errors.corrects.join(" ")}</p> : null}
      {text.corrects.length ? (
        <div className="space-y-1.5">
          <label htmlFor="save-correction-note" className="block text-sm font-medium">
            What was wrong, on what evidence (required)
          </label>
          <textarea
            id="save-correction-note"
            value={text.correctionNote}
            onChange={(e) => onText({ correctionNote: e.target.value })}
            rows={3}
            className={controlClass(!!errors.correctionNote)}
            placeholder="e.g. The published table's turnover was a misprint: three test-disc bands give 350 Hz."
            data-testid="save-correction-note"
          />
          {errors.correctionNote ? (
            <p className="text-xs font-medium text-alarm">{errors.correctionNote.join(" ")}</p>
          ) : null}
          <p className="text-xs text-ink-faint">
            Sides whose curve rests on a corrected version are listed on the preset&apos;s uses page, where a
            re-render campaign can redo them from this version.
          </p>
        </div>
      ) : null}
    </fieldset>
  );
}

export function SaveForm({
  text,
  onText,
  loaded,
  blocked,
  saving,
  onSave,
}: {
  text: PresetText;
  onText: (change: Partial<PresetText>) => void;
  /** The preset being edited, if any: it may get a new version. */
  loaded: PresetJson | undefined;
  /** The curve cannot be built: nothing may be saved. */
  blocked: boolean;
  saving: ReturnType<typeof useSavePreset>;
  onSave: (asNewVersion: boolean) => void;
}) {
  const fieldErrors = (saving.error instanceof AppError && saving.error.fields) || {};
  const result = saving.isSuccess
    ? { ok: true, message: `Saved "${saving.data.name}" as version ${saving.data.currentVersion}.` }
    : saving.error
      ? { ok: false, message: saving.error.message }
      : null;
  const disabled = saving.isPending || blocked;
  return (
    <form
      className="space-y-4"
      onSubmit={(e) => {
        e.preventDefault();
        onSave(!!loaded);
      }}
      data-testid="save-form"
    >
      <TextField
        id="save-name"
        label="Name"
        value={text.name}
        onChange={(e) => onText({ name: e.target.value })}
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
          value={text.notes}
          onChange={(e) => onText({ notes: e.target.value })}
          rows={3}
          className={controlClass(false)}
          data-testid="save-notes"
        />
      </div>
      <TextField
        id="save-change-note"
        label="Why this change (required)"
        value={text.changeNote}
        onChange={(e) => onText({ changeNote: e.target.value })}
        errors={fieldErrors.changeNote}
        hint="Kept with the version, so a later curator knows why."
        data-testid="save-change-note"
      />
      {loaded ? (
        <CorrectionFields
          text={text}
          onText={onText}
          currentVersion={loaded.currentVersion}
          errors={fieldErrors}
        />
      ) : null}
      {fieldErrors.spec ? (
        <p className="text-xs font-medium text-alarm">{fieldErrors.spec.join(" ")}</p>
      ) : null}
      <div className="flex flex-wrap gap-2">
        {loaded ? (
          <Button
            type="button"
            disabled={disabled}
            onClick={() => onSave(true)}
            data-testid="save-new-version"
          >
            Save as version {loaded.currentVersion + 1}
          </Button>
        ) : null}
        <Button
          type="button"
          variant={loaded ? "secondary" : "primary"}
          disabled={disabled}
          onClick={() => onSave(false)}
          data-testid="save-new-preset"
        >
          Save as new preset
        </Button>
        {saving.isPending ? <span className="self-center text-sm text-ink-faint">Saving…</span> : null}
      </div>
      {blocked ? <p className="text-xs text-ink-faint">Fix the curve before saving.</p> : null}
      {result ? (
        <Notice tone={result.ok ? "success" : "error"} testId="save-result">
          {result.message}
        </Notice>
      ) : null}
    </form>
  );
}

export function VersionHistory({
  presetId,
  loaded,
  canCompare,
  onEdit,
  onCompare,
}: {
  presetId: string;
  loaded: PresetJson | undefined;
  canCompare: boolean;
  onEdit: (spec: CurveSpec) => void;
  onCompare: (slot: { label: string; spec: CurveSpec }) => void;
}) {
  const versionsQuery = usePresetVersions(presetId);
  if (!presetId)
    return (
      <p className="text-sm text-ink-faint">
        A saved preset keeps every version with who saved it, when and why. Open one from the library to see
        its history.
      </p>
    );
  if (versionsQuery.isLoading) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (versionsQuery.error) return <p className="text-sm text-alarm">{versionsQuery.error.message}</p>;
  const versions = versionsQuery.data?.versions ?? [];
  return (
    <div className="space-y-3">
      <p className="text-sm">
        <Link
          href={`/curves/presets/${encodeURIComponent(presetId)}/uses`}
          className="text-shellac-deep underline-offset-2 hover:underline"
          data-testid="preset-uses-link"
        >
          Where this preset is used, per version →
        </Link>
      </p>
      <ol className="space-y-3" data-testid="version-history">
        {[...versions]
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
              {v.correctsVersions.length ? (
                <p className="mt-1 text-sm" data-testid="version-correction">
                  <Badge tone="ok">corrects v{v.correctsVersions.join(", v")}</Badge>{" "}
                  <span className="text-ink-soft">{v.correctionNote}</span>
                </p>
              ) : null}
              {versions.some((w) => w.correctsVersions.includes(v.version)) ? (
                <p className="mt-1">
                  <Badge tone="alarm">
                    corrected by v
                    {versions
                      .filter((w) => w.correctsVersions.includes(v.version))
                      .map((w) => w.version)
                      .sort((a, b) => a - b)
                      .join(", v")}
                  </Badge>
                </p>
              ) : null}
              <div className="mt-1 flex gap-1">
                <Button type="button" variant="quiet" size="sm" onClick={() => onEdit(v.spec)}>
                  Put v{v.version} in the editor
                </Button>
                <Button
                  type="button"
                  variant="quiet"
                  size="sm"
                  disabled={!canCompare}
                  onClick={() => onCompare({ label: `${v.name} v${v.version}`, spec: v.spec })}
                >
                  Compare
                </Button>
              </div>
            </li>
          ))}
      </ol>
    </div>
  );
}
