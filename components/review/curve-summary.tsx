"use client";
/**
 * The curve the side was rendered through, as recorded: the preset version's values
 * as they were when it was chosen, what the engineer changed for this side, and what
 * the filter applies (at the transfer's speed); why, and on what evidence.
 */
import { useMemo } from "react";
import type { Candidate, CurveChoiceJson } from "@/components/bench/types";
import { when } from "@/components/catalogue/format";
import { formatDb, formatHz, formatNumber } from "@/components/curves/plot-format";
import { MeasurementEvidence } from "@/components/curves/measurement-evidence";
import { ResponsePlot } from "@/components/curves/response-plot";
import { cornerText } from "@/components/audit/event-sentence";
import {
  atCutSpeed,
  CORNER_NAMES,
  type CornerName,
  curveChoiceName,
  type CurveSpec,
  describeCurve,
} from "@/lib/curves";
import { evidenceLabels } from "@/lib/validation/transfers";

const CORNER_LABELS: Record<CornerName, string> = {
  turnover: "Bass turnover",
  shelf: "Low-frequency shelf",
  rolloff: "Treble rolloff",
  highpass: "Rumble high-pass",
  ultrasonic: "Ultrasonic zero",
};

export function CurveSummary({
  current,
  compared,
}: {
  current: CurveChoiceJson;
  /** The curves plotted: the page's own list (reviewCandidates), the one it listens to. */
  compared: Candidate[];
}) {
  const described = useMemo(() => {
    try {
      return { d: describeCurve(current.spec), error: null };
    } catch (err) {
      return { d: null, error: err instanceof Error ? err.message : String(err) };
    }
  }, [current.spec]);
  const preset = current.presetSpec;
  const overrides: Partial<CurveSpec> = current.overrides ?? {};
  const rows = CORNER_NAMES.filter((n) => (preset && preset[n]) || n in overrides || current.spec[n]);
  const ratio = current.transferSpeedRpm / current.cutSpeedRpm;

  return (
    <div className="space-y-4" data-testid="curve-summary">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <p className="text-lg font-semibold" data-testid="curve-name">
          {curveChoiceName(current)}
        </p>
        <p className="font-mono text-sm text-ink-soft">
          {ratio === 1
            ? `${formatNumber(current.cutSpeedRpm)} rpm`
            : `cut ${formatNumber(current.cutSpeedRpm)} rpm · transferred ${formatNumber(current.transferSpeedRpm)} rpm · ratio ${formatNumber(ratio)}` +
              (current.correctSpeed ? " · speed corrected in the render" : "")}
        </p>
      </div>

      <div className="space-y-1 rounded-lg border-l-4 border-groove bg-groove-wash/40 px-4 py-3">
        <p className="text-xs font-semibold uppercase tracking-wide text-ink-faint">Rationale</p>
        <p className="whitespace-pre-line text-sm" data-testid="curve-rationale">
          {current.rationale}
        </p>
        <p className="pt-1 text-xs text-ink-soft">
          <span className="font-medium">Rests on:</span>{" "}
          {evidenceLabels[current.evidenceKind] ?? current.evidenceKind}
          {current.evidence ? <> — {current.evidence}</> : null}
        </p>
        <p className="text-xs text-ink-faint">
          Chosen by {current.chosenBy} · {when(current.chosenAt)}
        </p>
      </div>

      <div className="overflow-x-auto rounded-lg border border-paper-edge bg-white">
        <table className="w-full text-left text-sm" aria-label="Curve values" data-testid="curve-values">
          <thead className="bg-paper-deep/60 text-xs uppercase tracking-wide text-ink-soft">
            <tr>
              <th scope="col" className="px-3 py-2 font-semibold">
                Corner
              </th>
              <th scope="col" className="px-3 py-2 font-semibold">
                {current.presetName ? `Preset v${current.presetVersion} when chosen` : "Preset"}
              </th>
              <th scope="col" className="px-3 py-2 font-semibold">
                Changed for this side
              </th>
              <th scope="col" className="px-3 py-2 font-semibold">
                Filter applies{ratio !== 1 ? " (at transfer speed)" : ""}
              </th>
            </tr>
          </thead>
          <tbody>
            {rows.map((n) => {
              const resolved = described.d?.curve[n] ?? null;
              return (
                <tr key={n} className="border-t border-paper-edge/70">
                  <th scope="row" className="px-3 py-2 font-medium">
                    {CORNER_LABELS[n]}
                  </th>
                  <td className="px-3 py-2 font-mono text-xs">{preset ? cornerText(preset[n]) : "—"}</td>
                  <td className="px-3 py-2 font-mono text-xs">
                    {n in overrides ? (
                      <span className="rounded bg-shellac-wash px-1.5 py-0.5 text-shellac-deep">
                        {cornerText(overrides[n])}
                      </span>
                    ) : (
                      <span className="text-ink-faint">as preset</span>
                    )}
                  </td>
                  <td className="px-3 py-2 font-mono text-xs">
                    {resolved
                      ? `${formatNumber(resolved.filterTauUs)} µs · ${formatHz(resolved.filterHz)}`
                      : "none"}
                  </td>
                </tr>
              );
            })}
            <tr className="border-t border-paper-edge/70">
              <th scope="row" className="px-3 py-2 font-medium">
                Normalised to
              </th>
              <td className="px-3 py-2 font-mono text-xs">
                {preset?.reference
                  ? `${formatNumber(preset.reference.db)} dB at ${formatHz(preset.reference.hz)}`
                  : preset
                    ? "0 dB at 1 kHz"
                    : "—"}
              </td>
              <td className="px-3 py-2 font-mono text-xs">
                {overrides.reference ? (
                  `${formatNumber(overrides.reference.db)} dB at ${formatHz(overrides.reference.hz)}`
                ) : (
                  <span className="text-ink-faint">as preset</span>
                )}
              </td>
              <td className="px-3 py-2 font-mono text-xs">
                {described.d
                  ? `${formatNumber(described.d.curve.reference.db)} dB at ${formatHz(described.d.curve.reference.hz)}`
                  : "—"}
              </td>
            </tr>
          </tbody>
        </table>
      </div>
      {described.d ? (
        <p className="text-sm text-ink-soft" data-testid="curve-peak">
          Peak gain {formatDb(described.d.peakGainDb)} at {formatHz(described.d.peakHz)}: the headroom the
          render had to leave.
        </p>
      ) : (
        <p role="alert" className="text-sm font-medium text-alarm">
          The recorded curve does not resolve: {described.error}
        </p>
      )}
      <ResponsePlot curves={compared} height={320} showPhase={false} />
      {current.measurement ? (
        <section aria-labelledby="measurement-heading" className="space-y-2 border-t border-paper-edge pt-4">
          <h3 id="measurement-heading" className="text-sm font-semibold">
            The test-disc measurement this choice rests on
          </h3>
          <MeasurementEvidence measurement={current.measurement} chosen={atCutSpeed(current.spec)} />
        </section>
      ) : null}
    </div>
  );
}
