"use client";
/**
 * Stored files whose latest fixity check failed (mismatch, missing or unreadable)
 * and that have not passed one since. These come first on the audit page.
 */
import { useQuery } from "@tanstack/react-query";
import Link from "next/link";
import { when } from "@/components/catalogue/format";
import { objectWords } from "@/lib/fixity/object-words";
import { fetchJson } from "@/lib/http/client";
import type { FixityAlert } from "./types";

const outcomeWords = {
  mismatch: "Checksum mismatch",
  missing: "File missing",
  error: "Could not be read",
} as const;

export function FixityAlerts() {
  const alerts = useQuery({
    queryKey: ["fixity-alerts"],
    queryFn: () => fetchJson<{ alerts: FixityAlert[] }>("/api/fixity"),
    refetchInterval: 30_000,
  });
  const list = alerts.data?.alerts ?? [];
  if (alerts.isLoading) return <p className="text-sm text-ink-faint">Loading fixity alerts…</p>;
  if (alerts.error)
    return (
      <p role="alert" className="text-sm font-medium text-alarm">
        Fixity alerts could not be loaded: {alerts.error.message}
      </p>
    );
  if (!list.length) {
    return (
      <p
        className="flex items-center gap-2 rounded-lg border border-moss/40 bg-moss-wash px-4 py-3 text-sm"
        data-testid="fixity-alerts-none"
      >
        <span aria-hidden className="font-mono font-bold text-moss">
          ✓
        </span>
        No open fixity failures: every file checked so far read back with the SHA-256 it was stored with.
      </p>
    );
  }
  return (
    <section
      role="alert"
      aria-labelledby="fixity-alerts-title"
      className="rounded-xl border-2 border-alarm bg-alarm-wash p-4"
      data-testid="fixity-alerts"
    >
      <h2 id="fixity-alerts-title" className="font-sans text-base font-semibold text-alarm">
        {list.length} stored file{list.length === 1 ? " has" : "s have"} failed fixity
      </h2>
      <p className="mt-1 text-sm text-ink-soft">
        Do not render from, approve or export these until they are restored. Follow the institution&apos;s
        procedure for damaged or missing preservation files: restore from a replica, then check the disc
        again.
      </p>
      <ul className="mt-3 space-y-2">
        {list.map((a) => (
          <li
            key={a.id}
            className="rounded-lg border border-alarm/30 bg-white px-3 py-2 text-sm"
            data-testid="fixity-alert"
          >
            <p>
              <span className="font-semibold text-alarm">{outcomeWords[a.outcome] ?? a.outcome}</span> ·{" "}
              {objectWords(a.objectKind)} of{" "}
              <Link
                href={`/catalogue/${a.discId}`}
                className="font-mono font-semibold text-shellac-deep underline underline-offset-2"
              >
                {a.shelfMark}
              </Link>{" "}
              {a.designation ? `side ${a.designation} ` : ""}·{" "}
              <time dateTime={a.checkedAt}>{when(a.checkedAt)}</time>
            </p>
            {a.detail ? <p className="mt-0.5 break-all text-xs text-ink-soft">{a.detail}</p> : null}
            <p className="mt-0.5 break-all font-mono text-[0.7rem] text-ink-faint">{a.objectKey}</p>
            <p className="mt-1 text-xs">
              <Link
                href={`/audit?disc=${a.discId}`}
                className="text-shellac-deep underline underline-offset-2"
              >
                This disc&apos;s history and a new check
              </Link>
            </p>
          </li>
        ))}
      </ul>
    </section>
  );
}
