"use client";

import { useId, useState } from "react";
import { parseNumber } from "@/components/curves/corner-fields";
import { formatNumber } from "@/components/curves/plot-format";
import { Button } from "@/components/ui/button";
import { SelectField, TextField } from "@/components/ui/field";
import { fetchJson } from "@/lib/http/client";
import { AppError } from "@/lib/http/errors";

/** The server's answer (lib/transfers/pitch-reference.ts). */
interface PitchAnswer {
  referenceHz: number;
  peakHz: number;
  prominenceDb: number;
  confidence: "clear" | "fair" | "weak";
  bandHz: [number, number];
  proposedCutSpeedRpm: number;
  transferSpeedRpm: number;
}

const REFERENCES = [
  { value: "440", label: "A = 440 Hz (tuning note)" },
  { value: "435", label: "A = 435 Hz (older concert pitch)" },
  { value: "50", label: "Mains hum, 50 Hz" },
  { value: "60", label: "Mains hum, 60 Hz" },
  { value: "other", label: "Another pitch…" },
];

const CONFIDENCE_TEXT: Record<PitchAnswer["confidence"], string> = {
  clear: "a clear peak",
  fair: "a fair peak: listen before you trust it",
  weak: "a weak peak, hardly above the noise: try another window",
};

/**
 * The pitch reference: the engineer names a sound of known pitch and a window of the flat
 * transfer; the server finds the peak near it and proposes the cut speed, which the engineer
 * takes into the "cut at" field or leaves.
 */
export function PitchReference({
  sideId,
  transferSpeedRpm,
  onAccept,
}: {
  sideId: string;
  transferSpeedRpm: number;
  onAccept: (cutSpeedRpm: number) => void;
}) {
  const uid = useId();
  const [open, setOpen] = useState(false);
  const [reference, setReference] = useState("440");
  const [otherHz, setOtherHz] = useState("");
  const [start, setStart] = useState("0");
  const [length, setLength] = useState("5");
  const [busy, setBusy] = useState(false);
  const [answer, setAnswer] = useState<PitchAnswer | null>(null);
  const [error, setError] = useState<string | null>(null);

  if (!open)
    return (
      <Button type="button" size="sm" variant="quiet" onClick={() => setOpen(true)} data-testid="pitch-open">
        Estimate the cut speed from a pitch reference…
      </Button>
    );

  const referenceHz = reference === "other" ? parseNumber(otherHz) : Number(reference);
  const find = async () => {
    setBusy(true);
    setError(null);
    setAnswer(null);
    try {
      setAnswer(
        await fetchJson<PitchAnswer>(`/api/sides/${sideId}/pitch-reference`, {
          method: "POST",
          body: JSON.stringify({
            referenceHz,
            startSeconds: parseNumber(start),
            lengthSeconds: parseNumber(length),
            transferSpeedRpm,
          }),
        }),
      );
    } catch (err) {
      setError(err instanceof AppError ? err.message : String(err));
    } finally {
      setBusy(false);
    }
  };

  return (
    <div
      className="space-y-2 rounded-lg border border-paper-edge bg-white px-3 py-2"
      data-testid="pitch-reference"
    >
      <p className="text-xs text-ink-soft">
        Name a sound whose true pitch you know and where it is heard in the flat transfer. On a disc played
        slower than it was cut, it sounds flat; the cut speed is then the transfer speed × its true pitch ÷
        the pitch found. Hum counts only if it was recorded with the disc, not picked up by the transfer
        chain.
      </p>
      <div className="grid grid-cols-[minmax(0,1.6fr)_1fr_1fr] gap-2">
        <SelectField
          id={`${uid}-ref`}
          label="Reference"
          value={reference}
          onChange={(e) => setReference(e.target.value)}
          data-testid="pitch-ref"
        >
          {REFERENCES.map((r) => (
            <option key={r.value} value={r.value}>
              {r.label}
            </option>
          ))}
        </SelectField>
        <TextField
          id={`${uid}-start`}
          label="From (s)"
          value={start}
          inputMode="decimal"
          onChange={(e) => setStart(e.target.value)}
          data-testid="pitch-start"
        />
        <TextField
          id={`${uid}-length`}
          label="Length (s)"
          value={length}
          inputMode="decimal"
          onChange={(e) => setLength(e.target.value)}
          data-testid="pitch-length"
        />
      </div>
      {reference === "other" ? (
        <TextField
          id={`${uid}-other`}
          label="Its true pitch (Hz)"
          value={otherHz}
          inputMode="decimal"
          onChange={(e) => setOtherHz(e.target.value)}
        />
      ) : null}
      <div className="flex flex-wrap gap-2">
        <Button
          type="button"
          size="sm"
          variant="secondary"
          disabled={busy}
          onClick={() => void find()}
          data-testid="pitch-find"
        >
          {busy ? "Looking…" : "Find the peak"}
        </Button>
        <Button type="button" size="sm" variant="quiet" onClick={() => setOpen(false)}>
          Close
        </Button>
      </div>
      {error ? (
        <p role="alert" className="text-xs font-medium text-alarm">
          {error}
        </p>
      ) : null}
      {answer ? (
        <div className="space-y-1 rounded-md bg-groove-wash/60 px-3 py-2 text-xs" data-testid="pitch-answer">
          <p>
            Peak at <strong className="font-mono">{answer.peakHz.toFixed(2)} Hz</strong> (looked between{" "}
            {formatNumber(answer.bandHz[0])} and {formatNumber(answer.bandHz[1])} Hz for{" "}
            {formatNumber(answer.referenceHz)} Hz),{" "}
            <span className="font-mono">{answer.prominenceDb.toFixed(1)} dB</span> above the band around it:{" "}
            {CONFIDENCE_TEXT[answer.confidence]}.
          </p>
          <p>
            Cut at about{" "}
            <strong className="font-mono" data-testid="pitch-proposed">
              {formatNumber(answer.proposedCutSpeedRpm)} rpm
            </strong>{" "}
            ({formatNumber(answer.transferSpeedRpm)} × {formatNumber(answer.referenceHz)} ÷{" "}
            {answer.peakHz.toFixed(2)}).
          </p>
          <div className="flex gap-2">
            <Button
              type="button"
              size="sm"
              onClick={() => {
                onAccept(answer.proposedCutSpeedRpm);
                setAnswer(null);
                setOpen(false);
              }}
              data-testid="pitch-accept"
            >
              Use as “cut at”
            </Button>
            <Button type="button" size="sm" variant="quiet" onClick={() => setAnswer(null)}>
              Leave it
            </Button>
          </div>
        </div>
      ) : null}
    </div>
  );
}
