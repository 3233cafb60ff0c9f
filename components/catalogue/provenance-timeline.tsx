"use client";
import { useQuery } from "@tanstack/react-query";
import { useMemo, useState } from "react";
import { describeEvent, eventContext, kindLabel } from "@/components/audit/event-sentence";
import { cx } from "@/components/ui/cx";
import { fetchJson } from "@/lib/http/client";
import { when } from "./format";
import type { EventJson } from "./types";

/**
 * The disc's provenance timeline, newest first. Each event reads as on the audit page
 * (one sentence builder for both): which side, what happened and with what outcome.
 */
export function ProvenanceTimeline({
  discId,
  accessionName,
}: {
  discId: string;
  accessionName: (id: string) => string | undefined;
}) {
  const events = useQuery({
    queryKey: ["disc-events", discId],
    queryFn: () => fetchJson<{ events: EventJson[] }>(`/api/discs/${discId}/events`),
  });
  const [kind, setKind] = useState("");
  const all = useMemo(() => events.data?.events ?? [], [events.data]);
  const kinds = [...new Set(all.map((e) => e.kind))];
  const shown = kind ? all.filter((e) => e.kind === kind) : all;
  // Read from every event of the disc, so a filtered view still names curves and files.
  const ctx = useMemo(() => eventContext(all, accessionName), [all, accessionName]);

  return (
    <div className="space-y-4" data-testid="provenance-timeline">
      <div className="flex flex-wrap items-center gap-2">
        <label htmlFor="event-kind" className="text-sm text-ink-soft">
          Show
        </label>
        <select
          id="event-kind"
          value={kind}
          onChange={(e) => setKind(e.target.value)}
          className="h-8 rounded border border-paper-edge bg-white px-2 text-sm"
        >
          <option value="">Everything ({all.length})</option>
          {kinds.map((k) => (
            <option key={k} value={k}>
              {kindLabel(k)} ({all.filter((e) => e.kind === k).length})
            </option>
          ))}
        </select>
      </div>
      {events.isLoading ? <p className="text-sm text-ink-faint">Loading…</p> : null}
      {events.error ? <p className="text-sm text-alarm">{events.error.message}</p> : null}
      {!events.isLoading && !shown.length ? (
        <p className="text-sm text-ink-faint">Nothing recorded{kind ? " of this kind" : ""}.</p>
      ) : null}
      <ol className="relative space-y-4 border-l border-paper-edge pl-5">
        {shown.map((e) => {
          const { sentence, details, tone } = describeEvent(e, ctx);
          return (
            <li key={e.id} className="relative" data-testid="timeline-entry" data-kind={e.kind}>
              <span
                aria-hidden
                className={cx(
                  "absolute -left-[1.63rem] top-1.5 h-2.5 w-2.5 rounded-full border-2 border-white",
                  tone === "bad" ? "bg-alarm" : tone === "good" ? "bg-moss" : "bg-groove",
                )}
              />
              <p className="text-sm" data-testid="timeline-sentence">
                {sentence}
              </p>
              {details.length ? (
                <dl className="mt-1 grid gap-x-3 gap-y-0.5 text-xs sm:grid-cols-[9rem_minmax(0,1fr)]">
                  {details.map((d, i) => (
                    <div key={i} className="contents">
                      <dt className="text-ink-faint">{d.label}</dt>
                      <dd
                        className={cx(
                          "min-w-0 text-ink-soft",
                          d.mono ? "break-all font-mono text-[0.7rem]" : "whitespace-pre-line break-words",
                        )}
                      >
                        {d.value}
                      </dd>
                    </div>
                  ))}
                </dl>
              ) : null}
              <p className="mt-0.5 text-xs text-ink-faint">
                <time dateTime={e.at}>{when(e.at)}</time> · entry {e.seq} ·{" "}
                <span title={`SHA-256 ${e.hash}`} className="font-mono">
                  {e.hash.slice(0, 10)}
                </span>
              </p>
            </li>
          );
        })}
      </ol>
    </div>
  );
}
