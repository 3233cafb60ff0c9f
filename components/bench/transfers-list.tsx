"use client";
import { when } from "@/components/catalogue/format";
import { Badge } from "@/components/ui/badge";
import { Button } from "@/components/ui/button";
import { TransferEquipment } from "@/components/equipment/transfer-equipment";
import { FileFact, Sha256Line } from "./file-facts";
import { formatBytes, formatDuration } from "./progress-bar";
import type { TransferJson } from "./types";

/** The side's accepted flat transfers, newest first; the side's current one is what a render reads. */
export function TransfersList({
  transfers,
  loading,
  selectedId,
  onSelect,
  currentId,
}: {
  transfers: TransferJson[] | undefined;
  loading: boolean;
  selectedId: string | null;
  onSelect: (id: string) => void;
  currentId: string | null;
}) {
  if (loading) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (!transfers?.length) return <p className="text-sm text-ink-faint">No flat transfer yet.</p>;
  return (
    <ul className="space-y-3" data-testid="transfers-list">
      {transfers.map((t) => (
        <li
          key={t.id}
          className="rounded-lg border border-paper-edge bg-white p-3"
          data-testid="transfer-row"
        >
          <div className="flex flex-wrap items-center justify-between gap-2">
            <div className="flex flex-wrap items-center gap-2">
              <span className="font-mono text-sm font-semibold">{t.fileName}</span>
              {t.id === currentId ? (
                <Badge tone="groove" testId="transfer-current">
                  Current: the access copy is made from it
                </Badge>
              ) : (
                <Badge tone="neutral">Earlier transfer</Badge>
              )}
            </div>
            <Button
              type="button"
              size="sm"
              variant={selectedId === t.id ? "primary" : "secondary"}
              aria-pressed={selectedId === t.id}
              onClick={() => onSelect(t.id)}
              data-testid="transfer-audition"
            >
              {selectedId === t.id ? "In the player" : "Listen to this one"}
            </Button>
          </div>
          <dl className="mt-2 grid grid-cols-2 gap-x-4 gap-y-1 text-xs sm:grid-cols-4">
            <FileFact k="Format" v={`${t.container} · ${t.encoding.toUpperCase()} ${t.bitsPerSample}-bit`} />
            <FileFact
              k="Rate · channels"
              v={`${Number(t.sampleRateHz).toLocaleString("en-GB")} Hz · ${t.channels === 2 ? "stereo" : "mono"}`}
            />
            <FileFact
              k="Length"
              v={`${formatDuration(Number(t.durationSeconds))} · ${Number(t.frames).toLocaleString("en-GB")} frames`}
            />
            <FileFact k="Size" v={formatBytes(Number(t.bytes))} />
            <FileFact k="Stylus" v={[t.stylusSize, t.stylusShape].filter(Boolean).join(", ") || "—"} />
            <FileFact k="Measured speed" v={t.measuredSpeedRpm ? `${Number(t.measuredSpeedRpm)} rpm` : "—"} />
            <FileFact k="Uploaded" v={`${t.uploadedBy} · ${when(t.createdAt)}`} wide />
            <FileFact k="Chain" v={t.chain || "—"} wide />
          </dl>
          {t.equipment ? <TransferEquipment equipment={t.equipment} /> : null}
          <Sha256Line value={t.sha256} testId="transfer-sha256" />
        </li>
      ))}
    </ul>
  );
}
