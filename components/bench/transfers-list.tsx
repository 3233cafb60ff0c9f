"use client";
import { when } from "@/components/catalogue/format";
import { Badge } from "@/components/ui/badge";
import { Button } from "@/components/ui/button";
import { formatBytes, formatDuration } from "./progress-bar";
import type { TransferJson } from "./types";

/** The side's accepted flat transfers, newest first (the newest is the one a render reads). */
export function TransfersList({ transfers, loading, selectedId, onSelect }: { transfers: TransferJson[] | undefined; loading: boolean; selectedId: string | null; onSelect: (id: string) => void }) {
  if (loading) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (!transfers?.length) return <p className="text-sm text-ink-faint">No flat transfer yet.</p>;
  return (
    <ul className="space-y-3" data-testid="transfers-list">
      {transfers.map((t, i) => (
        <li key={t.id} className="rounded-lg border border-paper-edge bg-white p-3" data-testid="transfer-row">
          <div className="flex flex-wrap items-center justify-between gap-2">
            <div className="flex flex-wrap items-center gap-2">
              <span className="font-mono text-sm font-semibold">{t.fileName}</span>
              {i === 0 ? <Badge tone="groove">Newest: rendered from</Badge> : null}
            </div>
            <Button type="button" size="sm" variant={selectedId === t.id ? "primary" : "secondary"} aria-pressed={selectedId === t.id} onClick={() => onSelect(t.id)} data-testid="transfer-audition">
              {selectedId === t.id ? "In the player" : "Listen to this one"}
            </Button>
          </div>
          <dl className="mt-2 grid grid-cols-2 gap-x-4 gap-y-1 text-xs sm:grid-cols-4">
            <Item k="Format" v={`${t.container} · ${t.encoding.toUpperCase()} ${t.bitsPerSample}-bit`} />
            <Item k="Rate · channels" v={`${Number(t.sampleRateHz).toLocaleString("en-GB")} Hz · ${t.channels === 2 ? "stereo" : "mono"}`} />
            <Item k="Length" v={`${formatDuration(Number(t.durationSeconds))} · ${Number(t.frames).toLocaleString("en-GB")} frames`} />
            <Item k="Size" v={formatBytes(Number(t.bytes))} />
            <Item k="Stylus" v={[t.stylusSize, t.stylusShape].filter(Boolean).join(", ") || "—"} />
            <Item k="Measured speed" v={t.measuredSpeedRpm ? `${Number(t.measuredSpeedRpm)} rpm` : "—"} />
            <Item k="Uploaded" v={`${t.uploadedBy} · ${when(t.createdAt)}`} wide />
            <Item k="Chain" v={t.chain || "—"} wide />
          </dl>
          <p className="mt-2 break-all rounded bg-paper/70 px-2 py-1 font-mono text-[0.7rem] text-ink-soft" data-testid="transfer-sha256">
            <span className="font-sans font-medium text-ink">SHA-256 </span>
            {t.sha256}
          </p>
        </li>
      ))}
    </ul>
  );
}

function Item({ k, v, wide }: { k: string; v: string; wide?: boolean }) {
  return (
    <div className={wide ? "col-span-2" : undefined}>
      <dt className="text-ink-faint">{k}</dt>
      <dd className="font-mono text-ink">{v}</dd>
    </div>
  );
}
