"use client";
/**
 * The provenance log is hash-chained: each entry carries the SHA-256 of the one
 * before it. Verifying walks the whole log, recomputes every hash and names the
 * first entry whose link or content does not hold. Each run is itself recorded.
 */
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { when } from "@/components/catalogue/format";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { fetchJson } from "@/lib/http/client";
import type { ChainReport, LastChainCheck } from "./types";

export function ChainCheck() {
  const queryClient = useQueryClient();
  const last = useQuery({ queryKey: ["chain-last"], queryFn: () => fetchJson<{ last: LastChainCheck | null }>("/api/provenance/verify?last=1") });
  const [running, setRunning] = useState(false);
  const [report, setReport] = useState<ChainReport | null>(null);
  const [error, setError] = useState<string | null>(null);

  const verify = async () => {
    setRunning(true);
    setError(null);
    setReport(null);
    try {
      setReport(await fetchJson<ChainReport>("/api/provenance/verify"));
      await queryClient.invalidateQueries({ queryKey: ["chain-last"] });
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
    } finally {
      setRunning(false);
    }
  };

  const l = last.data?.last;
  return (
    <div className="space-y-4" data-testid="chain-check">
      <div className="rounded-lg border border-paper-edge bg-white px-4 py-3 text-sm" data-testid="chain-last">
        <p className="text-xs font-semibold uppercase tracking-wide text-ink-faint">Last verification</p>
        {last.isLoading ? (
          <p className="text-ink-faint">Loading…</p>
        ) : last.error ? (
          <p className="text-alarm">{last.error.message}</p>
        ) : !l ? (
          <p className="text-ink-soft">The log has not been verified yet.</p>
        ) : (
          <p className="mt-1">
            <time dateTime={l.checkedAt}>{when(l.checkedAt)}</time> by {l.runBy ?? "the system"} —{" "}
            {l.ok ? (
              <span className="font-semibold text-moss">all {l.events.toLocaleString("en-GB")} entries linked and intact</span>
            ) : (
              <span className="font-semibold text-alarm">
                broken at entry {l.brokenSeq}
                {l.brokenReason ? `: ${l.brokenReason}` : ""}
              </span>
            )}
          </p>
        )}
      </div>

      <div className="flex flex-wrap items-center gap-3">
        <Button type="button" onClick={() => void verify()} disabled={running} data-testid="chain-verify">
          {running ? "Verifying…" : "Verify the whole log now"}
        </Button>
        <p className="text-xs text-ink-faint">Recomputes the SHA-256 of every entry in order. The run is recorded with your name.</p>
      </div>

      <div aria-live="polite">
        {report ? (
          report.ok ? (
            <Notice tone="success" title="The chain holds" testId="chain-result">
              All {report.events.toLocaleString("en-GB")} entries link to the one before and their content matches their hash (checked {when(report.checkedAt)}).
            </Notice>
          ) : (
            <Notice tone="error" title={`The chain is broken at entry ${report.brokenAt?.seq ?? "?"}`} testId="chain-result">
              <p>{report.brokenAt?.reason ?? "An entry does not verify."}</p>
              <p className="mt-1">
                Entries before {report.brokenAt?.seq} verify; from this one on the record cannot be trusted as it stands. Follow the institution&apos;s procedure: restore the log from a verified backup and find out what changed it.
              </p>
            </Notice>
          )
        ) : null}
        {error ? (
          <Notice tone="error" title="The verification did not run">
            {error}
          </Notice>
        ) : null}
      </div>
    </div>
  );
}
