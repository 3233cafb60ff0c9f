"use client";
/**
 * The two files under review — the flat transfer and the access copy rendered from
 * it — with their SHA-256, technical metadata and latest fixity result, and a
 * check of the disc's files now (the worker reads them back within seconds).
 */
import { FileFact, Sha256Line } from "@/components/bench/file-facts";
import { TransferEquipment } from "@/components/equipment/transfer-equipment";
import { formatBytes, formatDuration } from "@/components/bench/progress-bar";
import type { RenderJson, TransferJson } from "@/components/bench/types";
import { when } from "@/components/catalogue/format";
import { formatNumber } from "@/components/curves/plot-format";
import { Badge } from "@/components/ui/badge";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { channelModeLabels } from "@/lib/audio/channel-mode";
import type { FixityCheckJson, RenderFilterJson } from "./types";

export type FixityState = { state: "passed" | "failed" | "stale" | "never"; check: FixityCheckJson | null };

/** The object's latest check, and whether it counts: a pass since the file was stored. */
export function fixityOf(
  checks: FixityCheckJson[] | undefined,
  objectId: string | undefined,
  storedAt: string | null | undefined,
): FixityState {
  const check = objectId ? ((checks ?? []).find((c) => c.objectId === objectId) ?? null) : null;
  if (!check) return { state: "never", check: null };
  if (check.outcome !== "pass") return { state: "failed", check };
  if (storedAt && new Date(check.checkedAt).getTime() < new Date(storedAt).getTime())
    return { state: "stale", check };
  return { state: "passed", check };
}

const outcomeWords = {
  pass: "passed",
  mismatch: "checksum mismatch",
  missing: "file missing",
  error: "could not be read",
} as const;

/** "stereo", "mono", "6 ch". */
function channelsShort(channels: number): string {
  return channels === 2 ? "stereo" : channels === 1 ? "mono" : `${channels} ch`;
}

function FixityLine({ f, testId }: { f: FixityState; testId: string }) {
  const c = f.check;
  return (
    <div
      className={cx(
        "mt-2 flex flex-wrap items-center gap-2 rounded-md px-2.5 py-1.5 text-xs",
        f.state === "passed" ? "bg-moss-wash" : f.state === "failed" ? "bg-alarm-wash" : "bg-shellac-wash",
      )}
      data-testid={testId}
      data-state={f.state}
    >
      <span className="font-semibold">Fixity</span>
      {f.state === "passed" ? (
        <Badge tone="ok">Passed</Badge>
      ) : f.state === "failed" ? (
        <Badge tone="alarm">Failed: {outcomeWords[c!.outcome]}</Badge>
      ) : (
        <Badge tone="accent">{f.state === "never" ? "Not checked yet" : "Not checked since stored"}</Badge>
      )}
      {c ? (
        <span className="text-ink-soft">
          last checked <time dateTime={c.checkedAt}>{when(c.checkedAt)}</time>
        </span>
      ) : null}
      {c && c.outcome !== "pass" && c.detail ? (
        <span className="basis-full break-all text-alarm">{c.detail}</span>
      ) : null}
    </div>
  );
}

function FileCardHead({ title, href, testId }: { title: string; href: string; testId: string }) {
  return (
    <div className="flex flex-wrap items-center justify-between gap-2">
      <h3 className="font-sans text-sm font-semibold">{title}</h3>
      <a
        href={href}
        className="text-xs font-medium text-shellac-deep underline underline-offset-2"
        data-testid={testId}
      >
        Download
      </a>
    </div>
  );
}

export function TransferCard({ t, fixity }: { t: TransferJson; fixity: FixityState }) {
  return (
    <article className="rounded-lg border border-paper-edge bg-white p-3" data-testid="review-transfer">
      <FileCardHead
        title="Flat transfer"
        href={`/api/transfers/${t.id}/download`}
        testId="review-transfer-download"
      />
      <p className="break-all font-mono text-xs">{t.fileName}</p>
      <dl className="mt-2 grid grid-cols-2 gap-x-4 gap-y-1 text-xs">
        <FileFact k="Format" v={`${t.container} · ${t.encoding.toUpperCase()} ${t.bitsPerSample}-bit`} />
        <FileFact
          k="Rate · channels"
          v={`${Number(t.sampleRateHz).toLocaleString("en-GB")} Hz · ${channelsShort(Number(t.channels))}`}
        />
        <FileFact k="Length" v={formatDuration(Number(t.durationSeconds))} />
        <FileFact k="Size" v={formatBytes(Number(t.bytes))} />
        <FileFact k="Stylus" v={[t.stylusSize, t.stylusShape].filter(Boolean).join(", ") || "—"} />
        <FileFact
          k="Measured speed"
          v={t.measuredSpeedRpm ? `${formatNumber(Number(t.measuredSpeedRpm))} rpm` : "—"}
        />
        <FileFact k="Chain" v={t.chain || "—"} wide />
        <FileFact k="Uploaded" v={`${t.uploadedBy} · ${when(t.createdAt)}`} wide />
      </dl>
      {t.equipment ? <TransferEquipment equipment={t.equipment} /> : null}
      <Sha256Line value={t.sha256} testId="review-transfer-sha256" />
      <FixityLine f={fixity} testId="review-transfer-fixity" />
    </article>
  );
}

export function RenderCard({
  r,
  fixity,
  stale,
}: {
  r: RenderJson;
  fixity: FixityState;
  stale: string | null;
}) {
  const f: Partial<RenderFilterJson> = r.filter ?? {};
  return (
    <article className="rounded-lg border border-paper-edge bg-white p-3" data-testid="review-render">
      <FileCardHead
        title="Access copy"
        href={`/api/renders/${r.id}/download`}
        testId="review-render-download"
      />
      {stale ? (
        <p className="mt-1 rounded bg-alarm-wash px-2 py-1 text-xs font-medium text-alarm">{stale}</p>
      ) : null}
      <dl className="mt-2 grid grid-cols-2 gap-x-4 gap-y-1 text-xs">
        <FileFact k="Channels" v={channelModeLabels[r.channelMode] ?? r.channelMode} />
        <FileFact
          k="Word length · rate"
          v={`${r.bitDepth}-bit${r.sampleRateHz ? ` · ${Number(r.sampleRateHz).toLocaleString("en-GB")} Hz` : ""}`}
        />
        <FileFact k="Size" v={r.bytes ? formatBytes(Number(r.bytes)) : "—"} />
        <FileFact
          k="Trim · peak"
          v={`${r.trimDb !== null ? `${Number(r.trimDb).toFixed(2)} dB` : "—"} · ${r.peakDbfs !== null ? `${Number(r.peakDbfs).toFixed(2)} dBFS` : "—"}`}
        />
        <FileFact
          k="Filter"
          v={
            [
              f.kind,
              f.taps ? `${f.taps} taps` : null,
              f.delaySamples !== undefined ? `delay ${f.delaySamples} samples` : null,
            ]
              .filter(Boolean)
              .join(" · ") || "—"
          }
          wide
        />
        <FileFact
          k="Worst error vs the curve"
          v={
            f.maxErrorDb !== undefined
              ? `${formatNumber(f.maxErrorDb, 2)} dB · ` +
                `${f.maxPhaseErrorDeg !== undefined ? `${formatNumber(f.maxPhaseErrorDeg, 2)}°` : "—"} (20 Hz–20 kHz)`
              : "—"
          }
          wide
        />
        {f.software ? (
          <FileFact
            k="Software"
            v={[f.software, f.engine ? `${f.engine} engine` : null].filter(Boolean).join(" · ")}
            wide
          />
        ) : null}
        <FileFact k="Rendered" v={`for ${r.requestedBy} · ${r.finishedAt ? when(r.finishedAt) : "—"}`} wide />
      </dl>
      <Sha256Line value={r.sha256} testId="review-render-sha256" />
      <FixityLine f={fixity} testId="review-render-fixity" />
    </article>
  );
}

export function FixityCheckButton({
  onCheck,
  busy,
  progress,
}: {
  onCheck: () => void;
  busy: boolean;
  progress: string | null;
}) {
  return (
    <div className="flex flex-wrap items-center gap-3">
      <Button type="button" variant="secondary" onClick={onCheck} disabled={busy} data-testid="fixity-check">
        {busy ? "Checking…" : "Check fixity now"}
      </Button>
      <p className="text-xs text-ink-soft" aria-live="polite" data-testid="fixity-check-progress">
        {progress ??
          "Reads both files back from storage and compares their SHA-256 with the one recorded when they were stored."}
      </p>
    </div>
  );
}
