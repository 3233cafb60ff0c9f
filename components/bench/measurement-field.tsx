"use client";
/**
 * The test-disc measurement a curve choice rests on: the points file (dropped, chosen or
 * pasted), what the points are and which values to fit. The fit is tried here, in the
 * browser, with the curve engine the server uses; the server reads and fits the points
 * again from the same text when the choice is recorded, and keeps its own result.
 */
import { useId, useMemo } from "react";
import { useDropzone } from "react-dropzone";
import { MeasurementEvidence } from "@/components/curves/measurement-evidence";
import { FitParameterChoice, PointsKindChoice } from "@/components/curves/fit-choices";
import {
  atCutSpeed,
  type CurveSpec,
  type FitParameter,
  fitMeasuredPoints,
  type MeasurementJson,
} from "@/lib/curves";
import { maxMeasurementBytes } from "@/lib/validation/transfers";

export interface MeasurementDraft {
  sourceText: string;
  sourceFileName?: string;
  pointsKind: "recording" | "playback";
  fit: FitParameter[];
}

export const emptyMeasurement: MeasurementDraft = {
  sourceText: "",
  pointsKind: "recording",
  fit: ["turnover", "rolloff", "levelOffset"],
};

const FIT_CHOICES: FitParameter[] = ["turnover", "shelf", "rolloff", "highpass", "ultrasonic", "levelOffset"];

/** The fit as the browser works it out, shaped as the server will keep it; or why it cannot be made. */
function tryFit(
  d: MeasurementDraft,
  chosen: CurveSpec | null,
): { fit: MeasurementJson | null; problem: string | null } {
  if (!d.sourceText.trim()) return { fit: null, problem: null };
  try {
    const fit = fitMeasuredPoints(d.sourceText, d.pointsKind, d.fit, chosen ?? {});
    return { fit: { ...fit, sourceFileName: d.sourceFileName ?? null, sourceSha256: null }, problem: null };
  } catch (err) {
    return { fit: null, problem: err instanceof Error ? err.message : String(err) };
  }
}

export function MeasurementField({
  value,
  onChange,
  chosen,
  errors,
}: {
  value: MeasurementDraft;
  onChange: (next: MeasurementDraft) => void;
  /** The curve being chosen: the fit starts from it, and the plot compares the two. */
  chosen: CurveSpec | null;
  errors: string[];
}) {
  const uid = useId();
  const { fit, problem } = useMemo(() => tryFit(value, chosen), [value, chosen]);
  const { getRootProps, getInputProps, isDragActive, fileRejections } = useDropzone({
    multiple: false,
    maxSize: maxMeasurementBytes,
    accept: { "text/csv": [".csv"], "text/plain": [".txt", ".tsv"] },
    onDropAccepted: ([file]) => {
      void file.text().then((sourceText) => onChange({ ...value, sourceText, sourceFileName: file.name }));
    },
  });
  const rejected = fileRejections[0]?.errors[0];
  const atCut = chosen ? atCutSpeed(chosen) : null;

  return (
    <fieldset
      className="space-y-3 rounded-lg border border-paper-edge bg-paper/60 p-3"
      data-testid="measurement-field"
    >
      <legend className="px-1 text-sm font-medium">Test-disc measurement</legend>
      <p className="text-xs text-ink-soft">
        The points are kept with the choice, fitted on the server, and plotted for the reviewer. One frequency
        (Hz) and level (dB) per line, as <span className="font-mono">hz,db</span>; a header and{" "}
        <span className="font-mono">#</span> comments are allowed.
      </p>
      <div
        {...getRootProps({
          className:
            "cursor-pointer rounded-md border border-dashed px-3 py-2 text-center text-xs " +
            (isDragActive ? "border-groove bg-groove-wash/40" : "border-paper-edge bg-white text-ink-soft"),
        })}
        data-testid="measurement-drop"
      >
        <input {...getInputProps()} data-testid="measurement-file" aria-label="Points file" />
        {value.sourceFileName
          ? `Read “${value.sourceFileName}”. Drop or choose another file to replace it.`
          : "Drop the points file here, or click to choose it (CSV or text, up to 1 MB)."}
      </div>
      {rejected ? (
        <p className="text-xs font-medium text-alarm">
          {rejected.code === "file-too-large"
            ? "That file is over 1 MB: a measurement of up to 5 000 points fits well below."
            : "That file is not a CSV or text file of points."}
        </p>
      ) : null}
      <label htmlFor={`${uid}-points`} className="block text-xs font-medium">
        Or paste the points
      </label>
      <textarea
        id={`${uid}-points`}
        value={value.sourceText}
        onChange={(e) => onChange({ ...value, sourceText: e.target.value, sourceFileName: undefined })}
        rows={5}
        spellCheck={false}
        placeholder={"hz,db\n50,-16.9\n500,-2.6\n1000,0\n10000,13.7"}
        aria-invalid={errors.length ? true : undefined}
        className={
          "block w-full rounded-md border bg-white px-3 py-2 font-mono text-xs leading-5 " +
          (errors.length ? "border-alarm" : "border-paper-edge")
        }
        data-testid="measurement-points"
      />
      <PointsKindChoice
        name={`${uid}-kind`}
        value={value.pointsKind}
        onChange={(pointsKind) => onChange({ ...value, pointsKind })}
        words={{ recording: "The recording characteristic", playback: "The playback curve" }}
        testId={(k) => `measurement-kind-${k}`}
      />
      <FitParameterChoice
        parameters={FIT_CHOICES}
        value={value.fit}
        onChange={(fit) => onChange({ ...value, fit })}
        testId={(p) => `measurement-fit-${p}`}
      />
      {errors.length ? <p className="text-xs font-medium text-alarm">{errors.join(" ")}</p> : null}
      {problem ? (
        <p className="text-xs font-medium text-alarm" data-testid="measurement-problem">
          {problem}
        </p>
      ) : null}
      {fit && atCut ? <MeasurementEvidence measurement={fit} chosen={atCut} compact /> : null}
    </fieldset>
  );
}
