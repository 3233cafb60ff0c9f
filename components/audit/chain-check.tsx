"use client";
/**
 * The provenance log is hash-chained: each entry carries the SHA-256 of the one
 * before it. Verifying walks the whole log, recomputes every hash and names the
 * first entry whose link or content does not hold, then checks it against every
 * checkpoint stored in the bucket (a log cut short or rewritten with fresh hashes
 * contradicts one). Each run is itself recorded.
 */
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { when } from "@/components/catalogue/format";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { fetchJson } from "@/lib/http/client";
import type { ChainReport, CheckpointRef, LastChainCheck, LastCheckpoint } from "./types";

const shortKey = (key: string) => key.split("/").pop() ?? key;

function CheckpointLine({ c }: { c: CheckpointRef }) {
  return (
    <>
      the checkpoint of <time dateTime={c.takenAt}>{when(c.takenAt)}</time> (entry {c.headSeq},{" "}
      {c.events.toLocaleString("en-GB")} entries;{" "}
      <span className="font-mono text-xs break-all">{shortKey(c.key)}</span>)
    </>
  );
}

export function ChainCheck() {
  const queryClient = useQueryClient();
  const last = useQuery({
    queryKey: ["chain-last"],
    queryFn: () =>
      fetchJson<{ last: LastChainCheck | null; lastCheckpoint: LastCheckpoint | null }>(
        "/api/provenance/verify?last=1",
      ),
  });
  const [running, setRunning] = useState(false);
  const [anchoring, setAnchoring] = useState<"idle" | "sending" | "queued">("idle");
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

  const anchor = async () => {
    setAnchoring("sending");
    setError(null);
    try {
      await fetchJson<{ queued: boolean }>("/api/provenance/checkpoints", { method: "POST", body: "{}" });
      setAnchoring("queued");
      setTimeout(() => void queryClient.invalidateQueries({ queryKey: ["chain-last"] }), 5000);
    } catch (err) {
      setAnchoring("idle");
      setError(err instanceof Error ? err.message : String(err));
    }
  };

  const l = last.data?.last;
  const cp = last.data?.lastCheckpoint;
  return (
    <div className="space-y-4" data-testid="chain-check">
      <div
        className="rounded-lg border border-paper-edge bg-white px-4 py-3 text-sm"
        data-testid="chain-last"
      >
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
              <span className="font-semibold text-moss">
                all {l.events.toLocaleString("en-GB")} entries linked and intact
              </span>
            ) : (
              <span className="font-semibold text-alarm">
                {l.brokenSeq !== null ? `broken at entry ${l.brokenSeq}` : "did not verify"}
                {l.brokenReason ? `: ${l.brokenReason}` : ""}
                {l.contradictedCheckpoint
                  ? ` (contradicts checkpoint ${shortKey(l.contradictedCheckpoint)})`
                  : ""}
              </span>
            )}
            {l.checkpointSource ? (
              <span className="block text-xs text-ink-faint">
                Checked against {l.checkpoints} checkpoint{l.checkpoints === 1 ? "" : "s"} read from the{" "}
                {l.checkpointSource}.
              </span>
            ) : null}
          </p>
        )}
        <p className="mt-2 text-xs text-ink-soft" data-testid="chain-last-checkpoint">
          {cp ? (
            <>
              Newest checkpoint: <time dateTime={cp.takenAt}>{when(cp.takenAt)}</time>, entry {cp.headSeq} of{" "}
              {cp.events.toLocaleString("en-GB")}, head{" "}
              <span className="font-mono">{cp.headHash.slice(0, 16)}…</span>
              {cp.requestedBy ? `, asked for by ${cp.requestedBy}` : " (daily)"}.
            </>
          ) : (
            "No checkpoint has been written yet."
          )}
        </p>
      </div>

      <div className="flex flex-wrap items-center gap-3">
        <Button type="button" onClick={() => void verify()} disabled={running} data-testid="chain-verify">
          {running ? "Verifying…" : "Verify the whole log now"}
        </Button>
        <Button
          type="button"
          variant="secondary"
          onClick={() => void anchor()}
          disabled={anchoring === "sending"}
          data-testid="chain-checkpoint"
        >
          {anchoring === "sending" ? "Asking…" : "Write a checkpoint now"}
        </Button>
        <p className="text-xs text-ink-faint">
          Verifying recomputes the SHA-256 of every entry in order and checks the log against every checkpoint
          in the bucket; the run is recorded with your name. A checkpoint (written daily, or now) stores the
          log&apos;s head in the bucket, where it is never overwritten, and is mailed to the curators.
        </p>
      </div>
      {anchoring === "queued" ? (
        <p className="text-xs text-moss" role="status" data-testid="chain-checkpoint-queued">
          Asked: the worker verifies the log, writes the checkpoint and mails it to the curators within a
          minute.
        </p>
      ) : null}

      <div aria-live="polite">
        {report ? (
          report.ok ? (
            <Notice tone="success" title="The chain holds" testId="chain-result">
              <p>
                All {report.events.toLocaleString("en-GB")} entries link to the one before and their content
                matches their hash (checked {when(report.checkedAt)}).
              </p>
              <p data-testid="chain-checkpoints">
                {report.checkpoints.total === 0
                  ? "No checkpoint in the bucket yet to check it against."
                  : `It agrees with all ${report.checkpoints.checked} checkpoint${report.checkpoints.checked === 1 ? "" : "s"} ` +
                    `read from the bucket (not from the database, whose copy could be rewritten too).`}
              </p>
            </Notice>
          ) : report.contradicts ? (
            <Notice
              tone="error"
              title={`The log contradicts a checkpoint at entry ${report.contradicts.headSeq}`}
              testId="chain-result"
            >
              <p>
                It contradicts <CheckpointLine c={report.contradicts} />, read from the bucket:{" "}
                {report.contradicts.reason}.
              </p>
              <p className="mt-1">
                The log was cut short or rewritten after that checkpoint was taken. Follow the
                institution&apos;s procedure: restore the log from a verified backup, compare it with the
                checkpoint mails the curators received, and find out what changed it.
              </p>
            </Notice>
          ) : report.brokenAt ? (
            <Notice
              tone="error"
              title={`The chain is broken at entry ${report.brokenAt.seq}`}
              testId="chain-result"
            >
              <p>{report.brokenAt.reason}</p>
              <p className="mt-1">
                Entries before {report.brokenAt.seq} verify; from this one on the record cannot be trusted as
                it stands. Follow the institution&apos;s procedure: restore the log from a verified backup and
                find out what changed it.
              </p>
            </Notice>
          ) : (
            <Notice tone="error" title="The checkpoints do not hold" testId="chain-result">
              <p>The {report.events.toLocaleString("en-GB")} entries link and match their hashes, but:</p>
              <ul className="mt-1 list-disc pl-5">
                {report.checkpoints.problems.map((p) => (
                  <li key={p}>{p}</li>
                ))}
              </ul>
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
