"use client";
import { useQuery } from "@tanstack/react-query";
import { createColumnHelper } from "@tanstack/react-table";
import Link from "next/link";
import { useState } from "react";
import { DataTable } from "@/components/ui/data-table";
import { Notice } from "@/components/ui/notice";
import { Panel } from "@/components/ui/panel";
import { fetchJson } from "@/lib/http/client";
import { AccessionForm } from "./accession-form";
import type { AccessionJson } from "./types";

const column = createColumnHelper<AccessionJson>();
const columns = [
  column.accessor("identifier", {
    header: "Identifier",
    cell: (c) => (
      <Link
        href={`/catalogue?accession=${c.row.original.id}`}
        className="whitespace-nowrap font-mono font-medium text-shellac-deep underline decoration-shellac/30 underline-offset-2 hover:decoration-shellac"
      >
        {c.getValue()}
      </Link>
    ),
  }),
  column.accessor("source", { header: "Source" }),
  column.accessor("receivedOn", {
    header: "Received",
    cell: (c) => <span className="font-mono text-xs">{c.getValue()}</span>,
  }),
  column.accessor("discCount", {
    header: "Discs",
    cell: (c) => <span className="font-mono">{c.getValue() ?? 0}</span>,
  }),
  column.accessor("notes", {
    header: "Notes",
    enableSorting: false,
    cell: (c) => <span className="text-xs text-ink-soft">{c.getValue()}</span>,
  }),
];

export function AccessionsView({ canEdit }: { canEdit: boolean }) {
  const accessions = useQuery({
    queryKey: ["accessions"],
    queryFn: () => fetchJson<{ accessions: AccessionJson[] }>("/api/accessions"),
  });
  const [created, setCreated] = useState<AccessionJson | null>(null);
  return (
    <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_24rem]">
      <DataTable
        columns={columns}
        data={accessions.data?.accessions}
        label="Accessions"
        urlKey="acc"
        loading={accessions.isLoading}
        error={accessions.error?.message}
        testId="accessions-table"
        defaultSort="-receivedOn"
        empty="No accessions recorded yet."
      />
      {canEdit ? (
        <Panel title="Record an accession" className="self-start">
          {created ? (
            <Notice tone="success" className="mb-4" testId="accession-created">
              Accession {created.identifier} recorded.{" "}
              <Link href={`/catalogue/new?accession=${created.id}`} className="underline">
                Catalogue a disc from it
              </Link>
              .
            </Notice>
          ) : null}
          <AccessionForm onCreated={setCreated} />
        </Panel>
      ) : null}
    </div>
  );
}
