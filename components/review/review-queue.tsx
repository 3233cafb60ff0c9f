"use client";
import { useQuery } from "@tanstack/react-query";
import { createColumnHelper } from "@tanstack/react-table";
import Link from "next/link";
import { formatLabel, when } from "@/components/catalogue/format";
import { DataTable } from "@/components/ui/data-table";
import { fetchJson } from "@/lib/http/client";
import type { ReviewQueueRow } from "./types";

const link =
  "font-mono font-semibold text-shellac-deep underline decoration-shellac/30 underline-offset-2 hover:decoration-shellac";
const column = createColumnHelper<ReviewQueueRow>();
const columns = [
  column.accessor("shelfMark", {
    header: "Disc",
    cell: (c) => (
      <div>
        <Link href={`/catalogue/${c.row.original.discId}`} className={link}>
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
    cell: (c) => <span className="font-mono text-base font-semibold">{c.getValue()}</span>,
  }),
  column.accessor("matrixNumber", {
    header: "Matrix",
    cell: (c) => <span className="font-mono text-xs">{c.getValue() || "—"}</span>,
  }),
  column.accessor("title", {
    header: "Title",
    cell: (c) => c.getValue() || <span className="text-ink-faint">untitled</span>,
  }),
  column.accessor((r) => formatLabel(r.format), {
    id: "format",
    header: "Format",
    cell: (c) => <span className="text-xs">{c.getValue()}</span>,
  }),
  column.accessor((r) => r.engineerName ?? "", {
    id: "engineer",
    header: "Engineer",
    cell: (c) => c.getValue() || <span className="text-ink-faint">—</span>,
  }),
  column.accessor("submittedAt", {
    header: "In review since",
    cell: (c) => <span className="whitespace-nowrap font-mono text-xs">{when(c.getValue())}</span>,
  }),
  column.display({
    id: "open",
    header: () => <span className="sr-only">Open</span>,
    cell: (c) => (
      <Link
        href={`/review/${c.row.original.id}`}
        className="inline-flex h-8 items-center rounded-md bg-shellac px-3 text-sm font-medium text-white hover:bg-shellac-deep"
        aria-label={`Review ${c.row.original.shelfMark} side ${c.row.original.designation}`}
        data-testid="review-link"
      >
        Review
      </Link>
    ),
  }),
];

/** The sides waiting for a curator, oldest first. */
export function ReviewQueue() {
  const queue = useQuery({
    queryKey: ["reviews"],
    queryFn: () => fetchJson<{ sides: ReviewQueueRow[] }>("/api/reviews"),
    refetchInterval: 30_000,
  });
  return (
    <DataTable
      columns={columns}
      data={queue.data?.sides}
      label="Sides in review"
      urlKey="review"
      loading={queue.isLoading}
      error={queue.error?.message}
      testId="review-table"
      empty="No side is waiting for review."
    />
  );
}
