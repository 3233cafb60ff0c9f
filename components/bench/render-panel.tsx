"use client";
/**
 * The access copy: the server renders the side's current flat transfer through its
 * current curve (the exact analog response, not the player's sections), with
 * the channel choice and word length set here, and writes a Broadcast WAVE
 * whose coding history records the chain.
 */
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useEffect, useId, useState } from "react";
import { when } from "@/components/catalogue/format";
import { formatNumber } from "@/components/curves/plot-format";
import { Badge } from "@/components/ui/badge";
import { Button } from "@/components/ui/button";
import { SelectField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useLabSettings } from "@/hooks/use-lab-settings";
import { sideRendersQuery } from "@/hooks/use-side";
import { type ChannelMode, channelModeLabels, channelModes } from "@/lib/audio/channel-mode";
import { fetchJson } from "@/lib/http/client";
import type { SideStatusName } from "@/lib/validation/catalogue";
import { accessCopyRates, renderableStatuses } from "@/lib/validation/transfers";
import { formatBytes, ProgressBar } from "./progress-bar";

const statusTone = {
  queued: "neutral",
  running: "accent",
  done: "ok",
  failed: "alarm",
  cancelled: "neutral",
} as const;
const statusWords = {
  queued: "Queued",
  running: "Rendering",
  done: "Done",
  failed: "Failed",
  cancelled: "Cancelled",
} as const;

export function RenderPanel({
  sideId,
  sideStatus,
  channels,
  transferRateHz,
  channelMode,
  onChannelMode,
  channelWhy,
  canRender,
  currentWork,
}: {
  sideId: string;
  sideStatus: SideStatusName;
  /** What the side stands on now: a render made from anything else is (or will be) superseded. */
  currentWork: { transferId: string | null; curveChoiceId: string | null };
  channels: number | null;
  transferRateHz: number | null;
  channelMode: ChannelMode;
  onChannelMode: (m: ChannelMode) => void;
  channelWhy: string;
  canRender: boolean;
}) {
  const uid = useId();
  const queryClient = useQueryClient();
  // The lab's defaults for access copies (admins set them on the audit page).
  const settings = useLabSettings();
  const [bitChoice, setBitDepth] = useState<16 | 24 | null>(null);
  const [rateChoice, setRate] = useState<"transfer" | number | null>(null);
  const bitDepth = bitChoice ?? settings.data?.accessCopyBitDepth ?? 24;
  const sampleRateHz = rateChoice ?? settings.data?.accessCopyRateHz ?? "transfer";
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const renders = useQuery({
    ...sideRendersQuery(sideId),
    // Poll every second while the worker has one in hand.
    refetchInterval: (q) =>
      q.state.data?.renders.some((r) => r.status === "queued" || r.status === "running") ? 1000 : false,
  });
  const list = renders.data?.renders ?? [];
  const busyRender = list.some((r) => r.status === "queued" || r.status === "running");
  const lastStatus = list[0]?.status;
  // A finished render moves the side on: read it again.
  useEffect(() => {
    if (lastStatus === "done") void queryClient.invalidateQueries({ queryKey: ["side", sideId] });
  }, [lastStatus, queryClient, sideId]);

  const request = async () => {
    setBusy(true);
    setError(null);
    try {
      await fetchJson("/api/renders", {
        method: "POST",
        body: JSON.stringify({ sideId, channelMode, bitDepth, sampleRateHz }),
      });
      await queryClient.invalidateQueries({ queryKey: ["renders", sideId] });
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
    } finally {
      setBusy(false);
    }
  };
  const cancel = async (renderId: string) => {
    setBusy(true);
    setError(null);
    try {
      await fetchJson(`/api/renders/${renderId}/cancel`, { method: "POST", body: JSON.stringify({}) });
      await queryClient.invalidateQueries({ queryKey: ["renders", sideId] });
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
    } finally {
      setBusy(false);
    }
  };
  const sendForReview = async () => {
    setBusy(true);
    setError(null);
    try {
      await fetchJson(`/api/sides/${sideId}/transition`, {
        method: "POST",
        body: JSON.stringify({ to: "in_review" }),
      });
      for (const key of [["side", sideId], ["queue"]]) await queryClient.invalidateQueries({ queryKey: key });
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
    } finally {
      setBusy(false);
    }
  };

  const ready = renderableStatuses.has(sideStatus);
  const waiting =
    sideStatus === "assigned"
      ? "An access copy is rendered once the flat transfer is in and a curve is recorded."
      : sideStatus === "transferred"
        ? "Record the curve (step 3) before rendering."
        : null;
  const modes: readonly ChannelMode[] = channels === 1 ? ["both"] : channelModes;
  return (
    <div className="space-y-4" data-testid="render-panel">
      {!ready && waiting ? <Notice tone="info">{waiting}</Notice> : null}
      <div className="grid gap-3 sm:grid-cols-[minmax(0,1fr)_10rem_auto] sm:items-end">
        <SelectField
          id={`${uid}-mode`}
          label="Channels"
          value={channelMode}
          onChange={(e) => onChannelMode(e.target.value as ChannelMode)}
          data-testid="render-channel-mode"
          hint={channelWhy}
        >
          {modes.map((m) => (
            <option key={m} value={m}>
              {channelModeLabels[m]}
            </option>
          ))}
        </SelectField>
        <SelectField
          id={`${uid}-bits`}
          label="Word length"
          value={bitDepth}
          onChange={(e) => setBitDepth(Number(e.target.value) as 16 | 24)}
          data-testid="render-bit-depth"
        >
          <option value={24}>24-bit</option>
          <option value={16}>16-bit</option>
        </SelectField>
        <SelectField
          id={`${uid}-rate`}
          label="Sample rate"
          value={String(sampleRateHz)}
          onChange={(e) => setRate(e.target.value === "transfer" ? "transfer" : Number(e.target.value))}
          data-testid="render-rate"
        >
          <option value="transfer">
            As the transfer{transferRateHz ? ` (${transferRateHz / 1000} kHz)` : ""}
          </option>
          {accessCopyRates
            .filter((r) => r !== transferRateHz)
            .map((r) => (
              <option key={r} value={r}>
                {r / 1000} kHz (resampled)
              </option>
            ))}
        </SelectField>
        <div className="pb-[1.4rem]">
          <Button
            type="button"
            onClick={() => void request()}
            disabled={!ready || busy || busyRender || !canRender}
            data-testid="render-start"
          >
            Render access copy
          </Button>
        </div>
      </div>
      {error ? (
        <Notice tone="error" testId="render-error">
          {error}
        </Notice>
      ) : null}

      {list.length ? (
        <ul className="space-y-2" data-testid="render-list">
          {list.map((r) => (
            <li
              key={r.id}
              className="rounded-lg border border-paper-edge bg-white p-3"
              data-testid="render-row"
              data-status={r.status}
            >
              <div className="flex flex-wrap items-center justify-between gap-2">
                <div className="flex flex-wrap items-center gap-2 text-sm">
                  {r.stalled ? (
                    <Badge tone="alarm" testId="render-stalled">
                      Stalled
                    </Badge>
                  ) : (
                    <Badge tone={statusTone[r.status]}>{statusWords[r.status]}</Badge>
                  )}
                  {r.status === "done" && r.current ? (
                    <Badge tone="groove" testId="render-current">
                      The access copy
                    </Badge>
                  ) : null}
                  {r.supersededAt ? (
                    <Badge tone="neutral" testId="render-superseded">
                      Superseded
                    </Badge>
                  ) : null}
                  <span>{channelModeLabels[r.channelMode] ?? r.channelMode}</span>
                  <span className="font-mono text-xs text-ink-soft">
                    {r.bitDepth}-bit{r.sampleRateHz ? ` · ${r.sampleRateHz / 1000} kHz` : ""}
                  </span>
                  <span className="text-xs text-ink-faint">
                    {r.requestedBy} · {when(r.createdAt)}
                  </span>
                </div>
                {r.status === "done" ? (
                  <a
                    href={`/api/renders/${r.id}/download`}
                    className="inline-flex h-8 items-center rounded-md border border-paper-edge bg-white px-3 text-sm font-medium hover:border-ink-faint"
                    data-testid="render-download"
                  >
                    {r.current ? "Download access copy" : "Download (superseded)"}
                  </a>
                ) : null}
              </div>
              {r.status === "queued" || r.status === "running" ? (
                <div className="mt-2 flex items-center gap-3">
                  <div className="min-w-0 flex-1">
                    <ProgressBar
                      value={r.progress}
                      label={r.status === "queued" ? "Waiting for the worker" : "Rendering"}
                      testId="render-progress"
                    />
                  </div>
                  {canRender && !r.stalled ? (
                    <Button
                      type="button"
                      size="sm"
                      variant="secondary"
                      onClick={() => void cancel(r.id)}
                      disabled={busy}
                      data-testid="render-cancel-running"
                    >
                      Cancel
                    </Button>
                  ) : null}
                </div>
              ) : null}
              {r.status === "done" ? (
                <p className="mt-1.5 font-mono text-xs text-ink-soft">
                  {r.bytes ? formatBytes(Number(r.bytes)) : ""} · trim{" "}
                  {r.trimDb !== null ? `${Number(r.trimDb).toFixed(2)} dB` : "—"} · peak{" "}
                  {r.peakDbfs !== null ? `${Number(r.peakDbfs).toFixed(2)} dBFS` : "—"}
                  {r.filter?.speedCorrection ? (
                    <span className="block font-sans text-ink" data-testid="render-speed-corrected">
                      Speed corrected from {formatNumber(r.filter.speedCorrection.transferSpeedRpm)} to{" "}
                      {formatNumber(r.filter.speedCorrection.cutSpeedRpm)} rpm (×
                      {r.filter.speedCorrection.factor.toFixed(4)}): pitch and length as cut, the curve at the
                      cut speed.
                    </span>
                  ) : null}
                  <span className="block break-all">SHA-256 {r.sha256}</span>
                </p>
              ) : null}
              {(r.status === "failed" || r.status === "cancelled") && r.error ? (
                <p className="mt-1.5 text-xs text-alarm">{r.error}</p>
              ) : null}
              {r.status === "queued" && r.error ? (
                // The last attempt failed for a passing reason (the file store away): it waits for the next one.
                <p className="mt-1.5 text-xs text-ink-soft" data-testid="render-retry-notice">
                  {r.error}
                </p>
              ) : null}
              {r.stalled ? (
                <div
                  className="mt-2 flex flex-wrap items-center justify-between gap-2 rounded-md border border-alarm/30 bg-alarm-wash px-3 py-2"
                  data-testid="render-stalled-notice"
                >
                  <p className="text-xs text-alarm">
                    The worker rendering this stopped answering at {Math.round(r.progress * 100)} %. It is
                    handed back to the queue and started again; or cancel it and render again.
                  </p>
                  {canRender ? (
                    <Button
                      type="button"
                      size="sm"
                      variant="danger"
                      onClick={() => void cancel(r.id)}
                      disabled={busy}
                      data-testid="render-cancel"
                    >
                      Cancel render
                    </Button>
                  ) : null}
                </div>
              ) : null}
              {r.supersededReason ? (
                <p className="mt-1.5 text-xs text-ink-soft">
                  Superseded: {r.supersededReason}. Kept with its file and SHA-256; never offered as the
                  access copy.
                </p>
              ) : null}
              {(r.status === "queued" || r.status === "running") &&
              (r.transferId !== currentWork.transferId || r.curveChoiceId !== currentWork.curveChoiceId) ? (
                <p className="mt-1.5 text-xs text-shellac-deep">
                  Made from an earlier transfer or curve: it will be recorded as superseded when it finishes.
                  Render again for the access copy.
                </p>
              ) : null}
            </li>
          ))}
        </ul>
      ) : (
        <p className="text-sm text-ink-faint">No access copy yet.</p>
      )}

      {sideStatus === "rendered" ? (
        <div className="flex items-center justify-between gap-3 rounded-lg border border-groove/40 bg-groove-wash/50 px-4 py-3">
          <p className="text-sm">
            Listened to the access copy? A curator reviews it next; someone other than you approves it.
          </p>
          <Button
            type="button"
            onClick={() => void sendForReview()}
            disabled={busy}
            data-testid="send-for-review"
          >
            Send for review
          </Button>
        </div>
      ) : sideStatus === "in_review" ? (
        <Notice tone="success">Sent for review.</Notice>
      ) : null}
    </div>
  );
}
