"use client";
import { useQuery } from "@tanstack/react-query";
import { createColumnHelper } from "@tanstack/react-table";
import Link from "next/link";
import { DataTable } from "@/components/ui/data-table";
import { fetchJson } from "@/lib/http/client";
import { formatLabel, speedLabel, when } from "./format";
import { StatusBadge } from "./status-badge";

interface QueueSide {
  id: string;
  designation: string;
  matrixNumber: string;
  title: string;
  status: string;
  returnReason: string | null;
  updatedAt: string;
  discId: string;
  shelfMark: string;
  labelName: string;
  catalogueNumber: string;
  format: string;
  nominalSpeedRpm: number;
}

const column = createColumnHelper<QueueSide>();
const columns = [
  column.accessor("shelfMark", {
    header: "Disc",
    cell: (c) => (
      <div>
        <Link
          href={`/catalogue/${c.row.original.discId}`}
          className="font-mono font-medium text-shellac-deep underline decoration-shellac/30 underline-offset-2 hover:decoration-shellac"
        >
          {c.getValue()}
        </Link>
        <p className="text-xs text-ink-faint">
          {[c.row.original.labelName, c.row.original.catalogueNumber].filter(Boolean).join(" · ")}
        </p>
      </div>
    ),
  }),
  column.accessor("designation", {
    header: "Side",
    cell: (c) => (
      <Link
        href={`/bench/${c.row.original.id}`}
        className="font-mono font-semibold text-shellac-deep underline decoration-shellac/30 underline-offset-2 hover:decoration-shellac"
        aria-label={`Side ${c.getValue()} on the bench`}
        data-testid="queue-bench-link"
      >
        {c.getValue()}
      </Link>
    ),
  }),
  column.accessor("matrixNumber", {
    header: "Matrix",
    cell: (c) => <span className="font-mono text-xs">{c.getValue() || "—"}</span>,
  }),
  column.accessor("title", {
    header: "Title",
    cell: (c) => c.getValue() || <span className="text-ink-faint">untitled</span>,
  }),
  column.accessor((r) => `${formatLabel(r.format)} ${speedLabel(r.nominalSpeedRpm)}`, {
    id: "carrier",
    header: "Format · rpm",
    cell: (c) => (
      <span className="text-xs">
        {formatLabel(c.row.original.format)} · {speedLabel(c.row.original.nominalSpeedRpm)}
      </span>
    ),
  }),
  column.accessor("status", {
    header: "Status",
    cell: (c) => (
      <div className="space-y-1">
        <StatusBadge status={c.getValue()} />
        {c.row.original.status === "returned" && c.row.original.returnReason ? (
          <p
            className="max-w-72 rounded border-l-2 border-alarm bg-alarm-wash px-2 py-1 text-xs text-alarm"
            data-testid="queue-return-reason"
          >
            Returned: {c.row.original.returnReason}
          </p>
        ) : null}
      </div>
    ),
  }),
  column.accessor("updatedAt", {
    header: "Since",
    cell: (c) => <span className="whitespace-nowrap font-mono text-xs">{when(c.getValue())}</span>,
  }),
];

export function QueueTable() {
  const queue = useQuery({
    queryKey: ["queue"],
    queryFn: () => fetchJson<{ sides: QueueSide[] }>("/api/queue"),
  });
  const returned = queue.data?.sides.filter((s) => s.status === "returned").length ?? 0;
  return (
    <div className="space-y-3">
      {returned ? (
        <p className="text-sm font-medium text-alarm" role="status">
          {returned} side{returned === 1 ? " was" : "s were"} returned to you: read the reason before you
          start again.
        </p>
      ) : null}
      <DataTable
        columns={columns}
        data={queue.data?.sides}
        label="My queue"
        urlKey="queue"
        loading={queue.isLoading}
        error={queue.error?.message}
        testId="queue-table"
        empty="Nothing is assigned to you right now."
      />
    </div>
  );
}
