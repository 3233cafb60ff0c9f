"use client";
import { useQuery } from "@tanstack/react-query";
import { createColumnHelper } from "@tanstack/react-table";
import { useMemo, useState } from "react";
import { Badge } from "@/components/ui/badge";
import { when } from "@/components/catalogue/format";
import { DataTable } from "@/components/ui/data-table";
import { fetchJson } from "@/lib/http/client";

interface Message {
  id: string;
  to: string;
  subject: string;
  text: string;
  status: "queued" | "sent" | "failed";
  attempts: number;
  lastError: string | null;
  createdAt: string;
  sentAt: string | null;
}

const column = createColumnHelper<Message>();
const tone = { queued: "accent", sent: "ok", failed: "alarm" } as const;

export function OutboxTable() {
  const { data, isLoading, error } = useQuery({
    queryKey: ["outbox"],
    queryFn: () => fetchJson<{ messages: Message[] }>("/api/outbox"),
    refetchInterval: 5000,
  });
  const [open, setOpen] = useState<Message | null>(null);
  // The table polls every five seconds: keep the same columns between polls.
  const columns = useMemo(
    () => [
      column.accessor("createdAt", {
        header: "Queued",
        cell: (c) => (
          <span className="whitespace-nowrap font-mono text-xs">{when(c.getValue(), { seconds: true })}</span>
        ),
      }),
      column.accessor("to", {
        header: "To",
        cell: (c) => <span className="whitespace-nowrap">{c.getValue()}</span>,
      }),
      column.accessor("subject", {
        header: "Subject",
        cell: (c) => (
          <button
            type="button"
            className="text-left underline decoration-paper-edge underline-offset-4 hover:decoration-shellac"
            onClick={() => setOpen(c.row.original)}
          >
            {c.getValue()}
          </button>
        ),
      }),
      column.accessor("status", {
        header: "Status",
        cell: (c) => (
          <span className="space-x-2">
            <Badge tone={tone[c.getValue()]}>{c.getValue()}</Badge>
            {c.row.original.attempts > 1 ? (
              <span className="text-xs text-ink-faint">{c.row.original.attempts} tries</span>
            ) : null}
          </span>
        ),
      }),
    ],
    [],
  );
  return (
    <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_minmax(0,28rem)]">
      <DataTable
        columns={columns}
        data={data?.messages}
        label="Outbox"
        urlKey="outbox"
        loading={isLoading}
        error={error?.message}
        testId="outbox-table"
        empty="No mail yet."
      />
      <aside
        aria-live="polite"
        className="rounded-xl border border-paper-edge bg-white/80 p-5"
        data-testid="outbox-message"
      >
        {open ? (
          <div className="space-y-3">
            <h2 className="text-lg font-semibold">{open.subject}</h2>
            <p className="text-xs text-ink-faint">
              to {open.to} · {open.sentAt ? `sent ${when(open.sentAt, { seconds: true })}` : open.status}
            </p>
            {open.lastError ? <p className="text-xs text-alarm">Last error: {open.lastError}</p> : null}
            <pre className="whitespace-pre-wrap break-words rounded bg-paper p-3 font-mono text-xs leading-relaxed">
              {open.text}
            </pre>
          </div>
        ) : (
          <p className="text-sm text-ink-faint">Choose a message to read its text.</p>
        )}
      </aside>
    </div>
  );
}
