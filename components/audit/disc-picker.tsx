"use client";
/** Finds a disc by shelf mark, label or catalogue number (the catalogue's own search) and picks one. */
import { useQuery } from "@tanstack/react-query";
import { useEffect, useId, useState } from "react";
import { Button } from "@/components/ui/button";
import { fetchJson } from "@/lib/http/client";
import type { DiscPick } from "./types";

export function DiscPicker({
  value,
  onChange,
  label,
  compact,
  clearLabel = "Choose another disc",
}: {
  value: DiscPick | null;
  onChange: (d: DiscPick | null) => void;
  label: string;
  compact?: boolean;
  clearLabel?: string;
}) {
  const uid = useId();
  const [text, setText] = useState("");
  const [q, setQ] = useState("");
  // Ask the server once typing pauses.
  useEffect(() => {
    const t = setTimeout(() => setQ(text.trim()), 250);
    return () => clearTimeout(t);
  }, [text]);
  const found = useQuery({
    queryKey: ["disc-pick", q],
    enabled: q.length > 0,
    queryFn: () => fetchJson<{ rows: DiscPick[] }>(`/api/discs?q=${encodeURIComponent(q)}&pageSize=8`),
  });

  if (value) {
    return (
      <div className="space-y-1">
        <p className={compact ? "text-xs font-medium text-ink-soft" : "text-sm font-medium"}>{label}</p>
        <div className="flex flex-wrap items-center gap-2">
          <span
            className="rounded-md border border-groove/40 bg-groove-wash px-3 py-1.5 font-mono text-sm font-semibold"
            data-testid="disc-picked"
          >
            {value.shelfMark}
          </span>
          {value.labelName || value.catalogueNumber ? (
            <span className="text-xs text-ink-soft">
              {[value.labelName, value.catalogueNumber].filter(Boolean).join(" · ")}
            </span>
          ) : null}
          <Button
            type="button"
            size="sm"
            variant="quiet"
            onClick={() => onChange(null)}
            data-testid="disc-picker-clear"
          >
            {clearLabel}
          </Button>
        </div>
      </div>
    );
  }
  const rows = found.data?.rows ?? [];
  return (
    <div className="relative space-y-1">
      <label
        htmlFor={`${uid}-q`}
        className={compact ? "block text-xs font-medium text-ink-soft" : "block text-sm font-medium"}
      >
        {label}
      </label>
      <input
        id={`${uid}-q`}
        type="search"
        value={text}
        onChange={(e) => setText(e.target.value)}
        placeholder="Shelf mark, label or catalogue number"
        aria-describedby={`${uid}-status`}
        className="h-9 w-full max-w-sm rounded-md border border-paper-edge bg-white px-3 text-sm"
        data-testid="disc-picker-search"
      />
      <p id={`${uid}-status`} className="text-xs text-ink-faint" aria-live="polite">
        {!q
          ? "Type to search the catalogue."
          : found.isFetching
            ? "Searching…"
            : found.error
              ? found.error.message
              : rows.length
                ? `${rows.length} disc${rows.length === 1 ? "" : "s"} found: choose one.`
                : "No disc matches."}
      </p>
      {rows.length ? (
        <ul
          className="max-w-sm divide-y divide-paper-edge overflow-hidden rounded-md border border-paper-edge bg-white"
          aria-label="Discs found"
          data-testid="disc-picker-results"
        >
          {rows.map((d) => (
            <li key={d.id}>
              <button
                type="button"
                className="flex w-full items-baseline justify-between gap-3 px-3 py-2 text-left text-sm hover:bg-paper-deep focus-visible:bg-paper-deep"
                onClick={() =>
                  onChange({
                    id: d.id,
                    shelfMark: d.shelfMark,
                    labelName: d.labelName,
                    catalogueNumber: d.catalogueNumber,
                  })
                }
              >
                <span className="font-mono font-semibold">{d.shelfMark}</span>
                <span className="truncate text-xs text-ink-soft">
                  {[d.labelName, d.catalogueNumber].filter(Boolean).join(" · ")}
                </span>
              </button>
            </li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}
