"use client";
/**
 * An engineer's calibration of a chain: the day, the test disc as the lab names it, the
 * curve the disc was cut with, and the measured (Hz, dB) points as CSV. The fit runs here
 * as the points are typed (lib/curves, the same fit the server records), so the plot shows
 * what will be saved.
 */
import { useId, useMemo, useState } from "react";
import { isoDateInputProps } from "@/components/catalogue/format";
import { Button } from "@/components/ui/button";
import { SelectField, TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { usePresets } from "@/hooks/use-presets";
import { type CurvePoint, type CurveSpec, parsePointsCsv, RIAA_SPEC } from "@/lib/curves";
import { calibrationFitParameters, RIAA_CALIBRATION_NAME } from "@/lib/validation/equipment";
import { FitParameterChoice, PointsKindChoice } from "@/components/curves/fit-choices";
import { CalibrationPlots, calibrationFits } from "./calibration-plots";
import { useSave } from "./use-save";

type Param = (typeof calibrationFitParameters)[number];
const RIAA = "riaa";

export function CalibrationForm({ chainId, onDone }: { chainId: string; onDone?: () => void }) {
  const uid = useId();
  const presets = usePresets();
  const [calibratedOn, setCalibratedOn] = useState(() => new Date().toISOString().slice(0, 10));
  const [testDisc, setTestDisc] = useState("");
  const [expectedId, setExpectedId] = useState(RIAA);
  const [text, setText] = useState("");
  const [pointsKind, setPointsKind] = useState<"recording" | "playback">("recording");
  const [params, setParams] = useState<Param[]>(["turnover", "rolloff", "levelOffset"]);
  const [notes, setNotes] = useState("");
  const { save, saving, error, field } = useSave<{ calibration: { id: string } }>();

  const preset = presets.data?.presets.find((p) => p.id === expectedId);
  const expected: { spec: CurveSpec; name: string } = preset
    ? { spec: preset.spec, name: `${preset.name} (v${preset.version})` }
    : { spec: RIAA_SPEC, name: RIAA_CALIBRATION_NAME };

  const preview = useMemo(() => {
    if (!text.trim())
      return { points: null as CurvePoint[] | null, fits: null, problem: null as string | null };
    try {
      const points = parsePointsCsv(text);
      return { points, fits: calibrationFits(points, pointsKind, params, expected.spec), problem: null };
    } catch (err) {
      return { points: null, fits: null, problem: err instanceof Error ? err.message : String(err) };
    }
  }, [text, pointsKind, params, expected.spec]);

  const submit = async () => {
    if (!preview.points) return;
    const answer = await save(`/api/equipment/chains/${chainId}/calibrations`, "POST", {
      calibratedOn,
      testDisc,
      ...(preset ? { presetId: preset.id, presetVersion: preset.version } : {}),
      points: preview.points,
      pointsKind,
      fit: params,
      notes,
    });
    if (answer) onDone?.();
  };

  return (
    <form
      className="space-y-4"
      onSubmit={(e) => {
        e.preventDefault();
        void submit();
      }}
      data-testid="calibration-form"
    >
      <div className="grid gap-3 sm:grid-cols-3">
        <TextField
          id={`${uid}-on`}
          label="Calibrated on"
          {...isoDateInputProps}
          value={calibratedOn}
          onChange={(e) => setCalibratedOn(e.target.value)}
          errors={field("calibratedOn")}
          data-testid="calibration-date"
        />
        <TextField
          id={`${uid}-disc`}
          label="Test disc"
          placeholder="as the lab names it"
          value={testDisc}
          onChange={(e) => setTestDisc(e.target.value)}
          errors={field("testDisc")}
          data-testid="calibration-disc"
        />
        <SelectField
          id={`${uid}-expected`}
          label="Cut with"
          value={expectedId}
          onChange={(e) => setExpectedId(e.target.value)}
          errors={field("presetId") ?? field("presetVersion")}
          data-testid="calibration-expected"
        >
          <option value={RIAA}>{RIAA_CALIBRATION_NAME}</option>
          {presets.data?.presets.map((p) => (
            <option key={p.id} value={p.id}>
              {p.name} (v{p.version})
            </option>
          ))}
        </SelectField>
      </div>
      <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_minmax(0,1fr)]">
        <div className="space-y-1.5">
          <label htmlFor={`${uid}-points`} className="block text-sm font-medium">
            Measured points as <span className="font-mono">hz,db</span>, one per line
          </label>
          <textarea
            id={`${uid}-points`}
            rows={8}
            value={text}
            onChange={(e) => setText(e.target.value)}
            spellCheck={false}
            placeholder={"hz,db\n100,-13.1\n1000,0\n10000,13.7"}
            className="block w-full rounded-md border border-paper-edge bg-white px-3 py-2 font-mono text-xs leading-5"
            data-testid="calibration-points"
          />
          {field("points") ? (
            <p className="text-xs font-medium text-alarm">{field("points").join(" ")}</p>
          ) : null}
        </div>
        <div className="space-y-3 text-sm">
          <fieldset>
            <legend className="mb-1 font-medium">The points give</legend>
            <PointsKindChoice
              name={`${uid}-kind`}
              value={pointsKind}
              onChange={setPointsKind}
              words={{
                recording: "the chain's flat output (the disc's recording characteristic)",
                playback: "a playback curve",
              }}
            />
          </fieldset>
          <fieldset>
            <legend className="mb-1 font-medium">Fit these; keep the rest as the expected curve</legend>
            <FitParameterChoice
              parameters={calibrationFitParameters}
              value={params}
              onChange={setParams}
              className="flex flex-wrap gap-4"
            />
            {field("fit") ? <p className="text-xs font-medium text-alarm">{field("fit").join(" ")}</p> : null}
          </fieldset>
          <TextField
            id={`${uid}-notes`}
            label="Notes"
            value={notes}
            onChange={(e) => setNotes(e.target.value)}
          />
        </div>
      </div>
      {preview.problem ? (
        <Notice tone="caution" title="Not fitted yet" testId="calibration-problem">
          {preview.problem}
        </Notice>
      ) : null}
      {preview.fits ? (
        <CalibrationPlots
          expected={expected.spec}
          expectedName={expected.name}
          fits={preview.fits}
          pointsKind={pointsKind}
          testId="calibration-preview"
        />
      ) : null}
      {error ? (
        <Notice tone="error" title="Not recorded" testId="calibration-error">
          {error}
        </Notice>
      ) : null}
      <div className="flex gap-2">
        <Button type="submit" disabled={saving || !preview.fits} data-testid="calibration-save">
          Record the calibration
        </Button>
        {onDone ? (
          <Button type="button" variant="quiet" onClick={onDone}>
            Cancel
          </Button>
        ) : null}
      </div>
    </form>
  );
}
