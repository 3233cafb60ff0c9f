"use client";
import { useQuery } from "@tanstack/react-query";
import { useState } from "react";
import { fetchJson } from "@/lib/http/client";
import { discFieldLabels, fieldText, sideChanges } from "./fields";
import { statusLabel, when } from "./format";
import type { EventJson } from "./types";

const kindLabels: Record<string, string> = {
  "disc.created": "Catalogued",
  "disc.edited": "Edits",
  "side.assigned": "Assignments",
  "side.status_changed": "Status changes",
  "import.committed": "Imports",
};

type P = Record<string, any>;

/** One event as a sentence, with the details (before → after) beneath it. */
function describe(e: EventJson, accessionName: (id: string) => string | undefined): { sentence: string; details: string[] } {
  const who = e.actorName ?? "The system";
  const p = e.payload as P;
  switch (e.kind) {
    case "disc.created": {
      const n = Array.isArray(p.after?.sides) && p.after.sides.length ? p.after.sides.length : 0;
      const how = Object.keys(p).some((k) => /import/i.test(k)) ? " from a spreadsheet import" : "";
      return { sentence: `${who} catalogued the disc${how}${n ? ` with ${n} side${n === 1 ? "" : "s"}` : ""}.`, details: [] };
    }
    case "disc.edited": {
      const changed: string[] = Array.isArray(p.changed) ? p.changed : [];
      const details: string[] = [];
      for (const f of changed) {
        if (f === "sides") details.push(...sideChanges(p.before?.sides ?? [], p.after?.sides ?? []));
        else details.push(`${discFieldLabels[f] ?? f}: ${fieldText(f, p.before?.[f], accessionName)} → ${fieldText(f, p.after?.[f], accessionName)}`);
      }
      return { sentence: changed.length ? `${who} edited ${changed.map((f) => (discFieldLabels[f] ?? f).toLowerCase()).join(", ")}.` : `${who} saved the disc without changes.`, details };
    }
    case "side.assigned": {
      const to = p.after?.engineerName ?? "an engineer";
      const from = p.before?.status && p.before.status !== "catalogued" ? ` (it was ${statusLabel(p.before.status).toLowerCase()})` : "";
      return { sentence: `${who} assigned side ${p.side ?? ""} to ${to}${from}.`, details: [] };
    }
    case "side.status_changed": {
      const details = p.reason ? [`Reason: ${p.reason}`] : [];
      return { sentence: `${who} moved side ${p.side ?? ""} from ${statusLabel(p.before?.status ?? "?").toLowerCase()} to ${statusLabel(p.after?.status ?? "?").toLowerCase()}.`, details };
    }
    case "import.committed":
      return { sentence: `${who} committed a spreadsheet import that included this disc.`, details: [] };
    default:
      return { sentence: `${who}: ${e.kind.replace(/[._]/g, " ")}.`, details: [] };
  }
}

export function ProvenanceTimeline({ discId, accessionName }: { discId: string; accessionName: (id: string) => string | undefined }) {
  const events = useQuery({ queryKey: ["disc-events", discId], queryFn: () => fetchJson<{ events: EventJson[] }>(`/api/discs/${discId}/events`) });
  const [kind, setKind] = useState("");
  const all = events.data?.events ?? [];
  const kinds = [...new Set(all.map((e) => e.kind))];
  const shown = kind ? all.filter((e) => e.kind === kind) : all;

  return (
    <div className="space-y-4" data-testid="provenance-timeline">
      <div className="flex flex-wrap items-center gap-2">
        <label htmlFor="event-kind" className="text-sm text-ink-soft">
          Show
        </label>
        <select id="event-kind" value={kind} onChange={(e) => setKind(e.target.value)} className="h-8 rounded border border-paper-edge bg-white px-2 text-sm">
          <option value="">Everything ({all.length})</option>
          {kinds.map((k) => (
            <option key={k} value={k}>
              {kindLabels[k] ?? k} ({all.filter((e) => e.kind === k).length})
            </option>
          ))}
        </select>
      </div>
      {events.isLoading ? <p className="text-sm text-ink-faint">Loading…</p> : null}
      {events.error ? <p className="text-sm text-alarm">{events.error.message}</p> : null}
      {!events.isLoading && !shown.length ? <p className="text-sm text-ink-faint">Nothing recorded{kind ? " of this kind" : ""}.</p> : null}
      <ol className="relative space-y-4 border-l border-paper-edge pl-5">
        {shown.map((e) => {
          const { sentence, details } = describe(e, accessionName);
          return (
            <li key={e.id} className="relative">
              <span aria-hidden className="absolute -left-[1.63rem] top-1.5 h-2.5 w-2.5 rounded-full border-2 border-white bg-groove" />
              <p className="text-sm">{sentence}</p>
              {details.length ? (
                <ul className="mt-1 space-y-0.5 text-xs text-ink-soft">
                  {details.map((d, i) => (
                    <li key={i} className="font-mono">
                      {d}
                    </li>
                  ))}
                </ul>
              ) : null}
              <p className="mt-0.5 text-xs text-ink-faint">
                <time dateTime={e.at}>{when(e.at)}</time> · entry {e.seq} · <span title={`SHA-256 ${e.hash}`} className="font-mono">{e.hash.slice(0, 10)}</span>
              </p>
            </li>
          );
        })}
      </ol>
    </div>
  );
}
