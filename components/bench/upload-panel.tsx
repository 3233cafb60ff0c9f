"use client";
/**
 * The flat transfer goes straight from this browser to the bucket, in parts,
 * with its SHA-256 worked out on the way; the server then checks size,
 * checksum and header before it accepts the file.
 */
import { useQueryClient } from "@tanstack/react-query";
import { useId, useState } from "react";
import { useDropzone } from "react-dropzone";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { ChainPicker } from "@/components/equipment/chain-picker";
import { useMultipartUpload } from "@/hooks/use-multipart-upload";
import { uploadDetailsSchema } from "@/lib/validation/transfers";
import { formatBytes, ProgressBar } from "./progress-bar";

/** The flat transfer comes first: it never waits for the curve, which is decided afterwards by evidence and by ear on it. */
export function UploadPanel({
  sideId,
  canUpload,
  replaces,
}: {
  sideId: string;
  canUpload: boolean;
  replaces: boolean;
}) {
  const uid = useId();
  const queryClient = useQueryClient();
  const { state, start, cancel, reset, confirmDuplicate } = useMultipartUpload();
  const [file, setFile] = useState<File | null>(null);
  const [stylusSize, setStylusSize] = useState("");
  const [stylusShape, setStylusShape] = useState("");
  const [measured, setMeasured] = useState("");
  const [chain, setChain] = useState("");
  const [equipment, setEquipment] = useState({ chainId: "", swapItemId: "" });
  const [localError, setLocalError] = useState<string | null>(null);
  const [detailErrors, setDetailErrors] = useState<Record<string, string[]>>({});
  const working = state.phase === "starting" || state.phase === "uploading" || state.phase === "checking";
  // With a transfer already in, the form waits behind one button (it replaces the current one);
  // opened once, or used in this visit, it stays open.
  const [open, setOpen] = useState(!replaces);

  const dz = useDropzone({
    multiple: false,
    disabled: working || !canUpload,
    accept: {
      "audio/wav": [".wav", ".bwf", ".rf64"],
      "audio/x-wav": [".wav", ".bwf", ".rf64"],
      "audio/vnd.wave": [".wav", ".bwf", ".rf64"],
      "application/octet-stream": [".bwf", ".rf64"],
    },
    onDrop: (accepted, rejected) => {
      setLocalError(
        rejected.length
          ? `${rejected[0].file.name}: only WAV, Broadcast WAVE (.bwf) and RF64 files are taken.`
          : null,
      );
      if (accepted[0]) {
        setFile(accepted[0]);
        reset();
      }
    },
  });

  const accepted = () => {
    for (const key of [["transfers", sideId], ["side", sideId], ["queue"]])
      void queryClient.invalidateQueries({ queryKey: key });
  };
  const send = async () => {
    if (!file) return;
    // The details are checked here first, so a mistyped speed is said before a large file travels.
    const details = uploadDetailsSchema.safeParse({
      stylusSize,
      stylusShape,
      measuredSpeedRpm: measured,
      chain,
      ...equipment,
    });
    if (!details.success) {
      const errors: Record<string, string[]> = {};
      for (const issue of details.error.issues)
        (errors[String(issue.path[0] ?? "_")] ??= []).push(issue.message);
      setDetailErrors(errors);
      return;
    }
    setDetailErrors({});
    const result = await start(sideId, file, details.data);
    if (result) accepted();
  };

  const f = (k: string) => detailErrors[k] ?? state.fields?.[k];
  if (!open)
    return (
      <div
        className="flex flex-wrap items-center justify-between gap-3 rounded-lg border border-dashed border-paper-edge bg-paper/40 px-4 py-3"
        data-testid="upload-panel"
      >
        <p className="text-sm text-ink-soft">
          {canUpload
            ? "The flat transfer is in. Another one, uploaded here, becomes the one the access copy is made from."
            : "The flat transfer is in; no other can be uploaded while the side stands where it is."}
        </p>
        <Button
          type="button"
          size="sm"
          variant="secondary"
          disabled={!canUpload}
          onClick={() => setOpen(true)}
          data-testid="upload-open"
        >
          Upload another transfer
        </Button>
      </div>
    );
  return (
    <div className="space-y-4" data-testid="upload-panel">
      {replaces && canUpload && file && state.phase !== "done" ? (
        <Notice tone="info" title="A new transfer replaces the current one">
          The side keeps every transfer, but a newly accepted one becomes the one the access copy is made
          from: any access copy rendered so far is superseded and the side is rendered again.
        </Notice>
      ) : null}
      {/* Side by side where the panel is wide enough (its own width, not the window's); put away once the file is accepted. */}
      {state.phase === "done" ? null : (
        <div className="@container">
          <div className="grid gap-5 @3xl:grid-cols-[minmax(0,1.1fr)_minmax(0,1fr)]">
            <div className="space-y-3">
              <div
                {...dz.getRootProps({
                  className: cx(
                    "flex min-h-28 @3xl:min-h-40 cursor-pointer flex-col items-center justify-center gap-1.5 rounded-xl " +
                      "border-2 border-dashed px-4 py-6 text-center transition-colors",
                    dz.isDragActive
                      ? "border-groove bg-groove-wash"
                      : "border-paper-edge bg-paper/50 hover:border-ink-faint",
                    (working || !canUpload) && "cursor-not-allowed opacity-60",
                  ),
                  "aria-label": "Flat transfer file: drop it here or press Enter to choose",
                })}
                data-testid="upload-drop"
              >
                <input {...dz.getInputProps()} data-testid="upload-input" aria-label="Flat transfer file" />
                <p className="text-sm font-medium">
                  {dz.isDragActive ? "Drop the file to take it" : "Drop the flat transfer here, or choose it"}
                </p>
                <p className="text-xs text-ink-faint">WAV, Broadcast WAVE or RF64 · unequalized · any size</p>
                {file ? (
                  <p className="mt-2 rounded bg-white px-2 py-1 font-mono text-xs" data-testid="upload-file">
                    {file.name} · {formatBytes(file.size)}
                  </p>
                ) : null}
              </div>
              {localError ? (
                <p role="alert" className="text-xs font-medium text-alarm">
                  {localError}
                </p>
              ) : null}
            </div>
            <div className="grid grid-cols-2 gap-3 @xl:grid-cols-3 @3xl:grid-cols-2">
              <TextField
                id={`${uid}-size`}
                label="Stylus tip size"
                placeholder="e.g. 3.0 mil"
                value={stylusSize}
                onChange={(e) => setStylusSize(e.target.value)}
                errors={f("stylusSize")}
                data-testid="upload-stylus-size"
              />
              <TextField
                id={`${uid}-shape`}
                label="Stylus shape"
                placeholder="e.g. truncated elliptical"
                value={stylusShape}
                onChange={(e) => setStylusShape(e.target.value)}
                errors={f("stylusShape")}
                data-testid="upload-stylus-shape"
              />
              <TextField
                id={`${uid}-speed`}
                label="Measured turntable speed (rpm)"
                inputMode="decimal"
                placeholder="optional"
                value={measured}
                onChange={(e) => setMeasured(e.target.value)}
                errors={f("measuredSpeedRpm")}
                data-testid="upload-measured-speed"
              />
              <div className="col-span-full">
                <ChainPicker
                  chainId={equipment.chainId}
                  swapItemId={equipment.swapItemId}
                  onChange={setEquipment}
                  disabled={working || !canUpload}
                  errors={{ chainId: f("chainId"), swapItemId: f("swapItemId") }}
                />
              </div>
              <div className="col-span-full">
                <TextField
                  id={`${uid}-chain`}
                  label="Transfer chain, in words (kept as written)"
                  placeholder="Turntable → arm → cartridge → flat preamp → converter, rate/bits"
                  value={chain}
                  onChange={(e) => setChain(e.target.value)}
                  errors={f("chain")}
                  data-testid="upload-chain"
                />
              </div>
            </div>
          </div>
        </div>
      )}

      {state.phase !== "idle" ? (
        <div className="space-y-2 rounded-lg border border-paper-edge bg-white p-3" aria-live="polite">
          <ProgressBar
            value={state.totalBytes ? state.sentBytes / state.totalBytes : 0}
            label={
              state.phase === "checking"
                ? "Sent — the server is checking size, checksum and header"
                : state.phase === "done"
                  ? "Sent and accepted"
                  : "Sent to storage"
            }
            detail={`${formatBytes(state.sentBytes)} of ${formatBytes(state.totalBytes)}`}
            tone={state.phase === "failed" ? "alarm" : "groove"}
            testId="upload-progress"
          />
          {state.phase === "uploading" && state.hashedBytes < state.totalBytes ? (
            <p className="text-xs text-ink-faint">
              Checksum worked out over {formatBytes(state.hashedBytes)} so far.
            </p>
          ) : null}
          {state.resumedParts ? (
            <p className="text-xs text-ink-faint">
              Resumed: {state.resumedParts} part{state.resumedParts === 1 ? " was" : "s were"} already stored.
            </p>
          ) : null}
        </div>
      ) : null}

      {state.outage && working ? (
        <Notice tone="caution" title={state.outage.message} testId="upload-outage">
          Nothing is lost: the parts already stored are kept, and the upload carries on from there as soon as
          it answers (tried {state.outage.tries} time{state.outage.tries === 1 ? "" : "s"} since{" "}
          {new Date(state.outage.since).toLocaleTimeString()}; the next try at{" "}
          {new Date(state.outage.nextTryAt).toLocaleTimeString()}).
        </Notice>
      ) : null}
      {state.phase === "failed" && state.error ? (
        <Notice tone="error" title="The transfer was not accepted" testId="upload-error">
          {state.error} {state.resumable ? "Try again to pick up where it stopped." : null}
        </Notice>
      ) : null}
      {state.phase === "confirm" && state.duplicate ? (
        <Notice
          tone="caution"
          title="The same file is already stored for another side"
          testId="upload-duplicate"
        >
          <p>{state.duplicate}</p>
          <div className="mt-3 flex flex-wrap gap-2">
            <Button type="button" size="sm" onClick={confirmDuplicate} data-testid="upload-confirm-duplicate">
              It is the right side: accept it
            </Button>
            <Button type="button" size="sm" variant="secondary" onClick={cancel}>
              Cancel this upload
            </Button>
          </div>
        </Notice>
      ) : null}
      {state.phase === "cancelled" ? <Notice tone="info">Upload cancelled; nothing was kept.</Notice> : null}
      {state.phase === "done" && state.result ? (
        <Notice tone="success" title="Flat transfer accepted" testId="upload-done">
          <span className="font-mono text-xs">
            SHA-256 {state.result.sha256} · {state.result.technical.sampleRateHz} Hz ·{" "}
            {state.result.technical.bitsPerSample}-bit ·{" "}
            {state.result.technical.channels === 2 ? "stereo" : "mono"} ·{" "}
            {state.result.technical.durationSeconds.toFixed(1)} s
          </span>
        </Notice>
      ) : null}

      <div className="flex flex-wrap gap-2">
        {state.phase === "done" ? (
          <Button
            type="button"
            variant="secondary"
            disabled={!canUpload}
            onClick={() => {
              reset();
              setFile(null);
            }}
            data-testid="upload-another"
          >
            Upload another transfer
          </Button>
        ) : (
          <Button
            type="button"
            onClick={() => void send()}
            disabled={!file || working || !canUpload || state.phase === "confirm"}
            data-testid="upload-start"
          >
            {state.phase === "failed" ? "Try again" : "Upload and check"}
          </Button>
        )}
        {working ? (
          <Button type="button" variant="danger" onClick={cancel} data-testid="upload-cancel">
            Cancel upload
          </Button>
        ) : null}
      </div>
    </div>
  );
}
