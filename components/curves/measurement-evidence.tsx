"use client";
/**
 * A test-disc measurement kept with a curve choice: the measured points against the
 * curve the server fitted to them and the curve chosen, the fit's figures, and the
 * residual at each point. Read-only: what the review and the record rest on.
 */
import { type CurveSpec, type MeasurementJson, measuredPlaybackPoints } from "@/lib/curves";
import { ResidualPlot } from "./fit-panel";
import { formatHz, formatSigned } from "./plot-format";
import { ResponsePlot } from "./response-plot";

const PARAMETER_WORDS: Record<string, string> = {
  turnover: "bass turnover",
  shelf: "low-frequency shelf",
  rolloff: "treble rolloff",
  highpass: "rumble high-pass",
  ultrasonic: "ultrasonic zero",
  levelOffset: "level offset",
};

export function MeasurementEvidence({
  measurement: m,
  chosen,
  compact = false,
}: {
  measurement: MeasurementJson;
  chosen: CurveSpec;
  /** In a narrow column (the bench's curve form): the figures two by two and the residuals, without the response plot. */
  compact?: boolean;
}) {
  return (
    <div className="space-y-3" data-testid="measurement-evidence">
      <dl className={`grid grid-cols-2 gap-2 text-sm ${compact ? "" : "sm:grid-cols-4"}`}>
        <div className="rounded-md bg-paper-deep/60 px-3 py-2">
          <dt className="text-xs text-ink-soft">Points</dt>
          <dd className="font-mono font-semibold" data-testid="measurement-point-count">
            {m.points.length}
          </dd>
          <dd className="text-xs text-ink-faint">
            {m.pointsKind === "recording" ? "recording characteristic" : "playback curve"}
          </dd>
        </div>
        <div className="rounded-md bg-paper-deep/60 px-3 py-2">
          <dt className="text-xs text-ink-soft">RMS error of the fit</dt>
          <dd className="font-mono font-semibold" data-testid="measurement-rms">
            {m.rmsDb.toFixed(3)} dB
          </dd>
        </div>
        <div className="rounded-md bg-paper-deep/60 px-3 py-2">
          <dt className="text-xs text-ink-soft">Worst point</dt>
          <dd className="font-mono font-semibold">{m.worstDb.toFixed(3)} dB</dd>
          <dd className="text-xs text-ink-faint">at {formatHz(m.worstHz)}</dd>
        </div>
        <div className="rounded-md bg-paper-deep/60 px-3 py-2">
          <dt className="text-xs text-ink-soft">Level offset</dt>
          <dd className="font-mono font-semibold">{formatSigned(m.levelOffsetDb, 2)} dB</dd>
        </div>
      </dl>
      <p className="text-xs text-ink-soft">
        Fitted: {m.fitParameters.map((p) => PARAMETER_WORDS[p] ?? p).join(", ")}; the rest as in the chosen
        curve.
        {m.sourceFileName || m.sourceSha256 ? (
          <>
            {" "}
            Points file{m.sourceFileName ? <> “{m.sourceFileName}”</> : null}
            {m.sourceSha256 ? (
              <>
                , SHA-256 <span className="break-all font-mono">{m.sourceSha256}</span>
              </>
            ) : null}
            .
          </>
        ) : null}
      </p>
      {/* The response plot needs a wider column than the bench's curve form; there the residuals say enough. */}
      {compact ? null : (
        <ResponsePlot
          curves={[
            { label: "Fitted to the points", spec: m.fittedSpec, color: "#a9591a" },
            { label: "Chosen curve", spec: chosen, color: "#2f6f6a" },
          ]}
          points={measuredPlaybackPoints(m)}
          pointsLabel="Measured points (as playback)"
          showAsymptotes={false}
          showPhase={false}
          height={300}
          testId="measurement-plot"
        />
      )}
      <ResidualPlot
        residuals={m.residuals}
        rmsDb={m.rmsDb}
        caption="Residual at each point, measurement − fitted curve (dB)"
      />
    </div>
  );
}
