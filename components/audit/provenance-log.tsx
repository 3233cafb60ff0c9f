"use client";
/**
 * The provenance log as a readable history, newest first: filtered by kind, person
 * and disc (kept in the URL so a view can be shared), paged by entry number.
 */
import { useInfiniteQuery, useQuery } from "@tanstack/react-query";
import Link from "next/link";
import { useId, useMemo, useState } from "react";
import { when } from "@/components/catalogue/format";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { useUrlState } from "@/hooks/use-url-state";
import { fetchJson } from "@/lib/http/client";
import { describeEvent, type EventContext, eventContext, kindFilters } from "./event-sentence";
import { DiscPicker } from "./disc-picker";
import type { AuditEvent, DiscPick } from "./types";

const PAGE = 50;

export function ProvenanceLog({
  disc,
  onPickDisc,
  canListPeople,
}: {
  disc: DiscPick | null;
  onPickDisc: (d: DiscPick | null) => void;
  canListPeople: boolean;
}) {
  const uid = useId();
  const [kind, setKind] = useUrlState("kind");
  const [actor, setActor] = useUrlState("person");
  const discId = disc?.id ?? "";

  const log = useInfiniteQuery({
    queryKey: ["audit-events", discId, kind, actor],
    initialPageParam: 0,
    queryFn: ({ pageParam }) => {
      const q = new URLSearchParams({ limit: String(PAGE) });
      if (discId) q.set("disc", discId);
      if (kind) q.set("kind", kind);
      if (actor) q.set("actor", actor);
      if (pageParam) q.set("before", String(pageParam));
      return fetchJson<{ events: AuditEvent[] }>(`/api/provenance/events?${q}`);
    },
    getNextPageParam: (last) =>
      last.events.length === PAGE ? last.events[last.events.length - 1].seq : undefined,
  });
  const events = useMemo(() => log.data?.pages.flatMap((p) => p.events) ?? [], [log.data]);
  // Which curve a render went through, which file a review approved: named from the other entries loaded.
  const ctx = useMemo(() => eventContext(events), [events]);

  // People: an admin may list everyone; others choose among the people seen in the log so far.
  const users = useQuery({
    queryKey: ["users"],
    enabled: canListPeople,
    queryFn: () => fetchJson<{ people: { id: string; name: string }[] }>("/api/users"),
  });
  const [seen, setSeen] = useState<Map<string, string>>(new Map());
  const newPeople = events.filter((e) => e.actorId && e.actorName && !seen.has(e.actorId));
  if (newPeople.length) {
    const next = new Map(seen);
    for (const e of newPeople) next.set(e.actorId!, e.actorName!);
    setSeen(next);
  }
  const people =
    canListPeople && users.data
      ? users.data.people.map((p) => ({ id: p.id, name: p.name }))
      : [...seen].map(([id, name]) => ({ id, name }));
  people.sort((a, b) => a.name.localeCompare(b.name));
  if (actor && !people.some((p) => p.id === actor)) people.push({ id: actor, name: "The person chosen" });

  return (
    <div className="space-y-4" data-testid="provenance-log">
      <div className="flex flex-wrap items-end gap-3">
        <div className="space-y-1">
          <label htmlFor={`${uid}-kind`} className="block text-xs font-medium text-ink-soft">
            What
          </label>
          <select
            id={`${uid}-kind`}
            value={kind}
            onChange={(e) => setKind(e.target.value)}
            className="h-9 w-72 rounded-md border border-paper-edge bg-white px-2 text-sm"
            data-testid="log-kind"
          >
            {kindFilters.map((k) => (
              <option key={k.value} value={k.value}>
                {k.label}
              </option>
            ))}
          </select>
        </div>
        <div className="space-y-1">
          <label htmlFor={`${uid}-person`} className="block text-xs font-medium text-ink-soft">
            Who
          </label>
          <select
            id={`${uid}-person`}
            value={actor}
            onChange={(e) => setActor(e.target.value)}
            className="h-9 w-56 rounded-md border border-paper-edge bg-white px-2 text-sm"
            data-testid="log-person"
          >
            <option value="">Anyone</option>
            {people.map((p) => (
              <option key={p.id} value={p.id}>
                {p.name}
              </option>
            ))}
          </select>
        </div>
        <div className="min-w-72 flex-1" data-testid="log-disc">
          <DiscPicker value={disc} onChange={onPickDisc} label="Disc" compact clearLabel="Every disc" />
        </div>
      </div>
      {!canListPeople ? (
        <p className="text-xs text-ink-faint">“Who” lists the people seen in the entries loaded so far.</p>
      ) : null}

      {log.error ? (
        <p role="alert" className="text-sm font-medium text-alarm">
          {log.error.message}
        </p>
      ) : null}
      {log.isLoading ? <p className="text-sm text-ink-faint">Loading the log…</p> : null}
      {!log.isLoading && !events.length && !log.error ? (
        <p className="text-sm text-ink-faint">No entries match.</p>
      ) : null}

      <ol className="space-y-2" aria-label="Provenance entries, newest first" data-testid="log-entries">
        {events.map((e) => (
          <EventItem key={e.id} e={e} ctx={ctx} showDisc={!disc} />
        ))}
      </ol>

      <div className="flex items-center gap-3">
        {log.hasNextPage ? (
          <Button
            type="button"
            variant="secondary"
            onClick={() => void log.fetchNextPage()}
            disabled={log.isFetchingNextPage}
            data-testid="log-more"
          >
            {log.isFetchingNextPage ? "Loading…" : "Load older entries"}
          </Button>
        ) : events.length ? (
          <p className="text-xs text-ink-faint">
            That is the beginning of {kind || actor || disc ? "the matching entries" : "the log"}.
          </p>
        ) : null}
        <span className="text-xs text-ink-faint">{events.length ? `${events.length} shown` : ""}</span>
      </div>
    </div>
  );
}

function EventItem({ e, ctx, showDisc }: { e: AuditEvent; ctx: EventContext; showDisc: boolean }) {
  const { sentence, details, tone } = describeEvent(e, ctx);
  return (
    <li
      className={cx(
        "grid gap-x-4 gap-y-1 rounded-lg border bg-white px-4 py-3 sm:grid-cols-[5.5rem_minmax(0,1fr)]",
        tone === "bad"
          ? "border-alarm/50 border-l-4"
          : tone === "good"
            ? "border-paper-edge border-l-4 border-l-moss"
            : "border-paper-edge",
      )}
      data-testid="log-entry"
      data-kind={e.kind}
      data-seq={e.seq}
    >
      <p className="font-mono text-sm font-semibold text-ink-soft" title="Entry number in the log">
        #{e.seq}
      </p>
      <div className="min-w-0 space-y-1">
        <p className="text-sm" data-testid="log-sentence">
          {sentence}
        </p>
        {details.length ? (
          <dl className="grid gap-x-3 gap-y-0.5 text-xs sm:grid-cols-[12rem_minmax(0,1fr)]">
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
        <p className="flex flex-wrap gap-x-3 gap-y-0.5 text-xs text-ink-faint">
          <span>{e.actorName ?? "the system"}</span>
          <time dateTime={e.at}>{when(e.at)}</time>
          <span
            className="font-mono"
            title={`SHA-256 of this entry ${e.hash}; of the one before ${e.prevHash}`}
          >
            hash {e.hash.slice(0, 12)}
          </span>
          <span className="font-mono">{e.kind}</span>
          {showDisc && e.discId ? (
            <>
              <Link
                href={`/catalogue/${e.discId}`}
                className="font-mono text-shellac-deep underline underline-offset-2"
              >
                {e.shelfMark ?? "the disc"}
              </Link>
              <Link
                href={`/audit?disc=${e.discId}`}
                className="text-shellac-deep underline underline-offset-2"
              >
                only this disc
              </Link>
            </>
          ) : e.discId ? (
            <Link
              href={`/catalogue/${e.discId}`}
              className="font-mono text-shellac-deep underline underline-offset-2"
            >
              {e.shelfMark ?? "the disc"}
            </Link>
          ) : null}
        </p>
      </div>
    </li>
  );
}
