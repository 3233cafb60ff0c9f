"use client";
import { useQuery } from "@tanstack/react-query";
import { createColumnHelper } from "@tanstack/react-table";
import Link from "next/link";
import { useMemo, useState } from "react";
import { Button } from "@/components/ui/button";
import { DataTable } from "@/components/ui/data-table";
import { Notice } from "@/components/ui/notice";
import { Panel } from "@/components/ui/panel";
import { fetchJson } from "@/lib/http/client";
import { AccessionForm } from "./accession-form";
import type { AccessionJson } from "./types";

const column = createColumnHelper<AccessionJson>();
const baseColumns = [
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
    cell: (c) => <span className="whitespace-nowrap font-mono text-xs">{c.getValue()}</span>,
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
  const [editing, setEditing] = useState<AccessionJson | null>(null);
  const [corrected, setCorrected] = useState<AccessionJson | null>(null);
  const columns = useMemo(
    () =>
      canEdit
        ? [
            ...baseColumns,
            column.display({
              id: "edit",
              header: "",
              cell: (c) => (
                <Button
                  type="button"
                  size="sm"
                  variant="quiet"
                  onClick={() => {
                    setCorrected(null);
                    setEditing(c.row.original);
                  }}
                  aria-label={`Correct accession ${c.row.original.identifier}`}
                  data-testid={`edit-accession-${c.row.original.identifier}`}
                >
                  Correct
                </Button>
              ),
            }),
          ]
        : baseColumns,
    [canEdit],
  );
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
      {canEdit && editing ? (
        <Panel title={`Correct accession ${editing.identifier}`} className="self-start">
          <p className="mb-3 text-sm text-ink-soft">
            The provenance log keeps what each field said before and after the correction.
          </p>
          <AccessionForm
            key={editing.id}
            editing={editing}
            testId="accession-edit"
            onCreated={(a) => {
              setEditing(null);
              setCorrected(a);
            }}
            onCancel={() => setEditing(null)}
          />
        </Panel>
      ) : canEdit ? (
        <Panel title="Record an accession" className="self-start">
          {corrected ? (
            <Notice tone="success" className="mb-4" testId="accession-corrected">
              Accession {corrected.identifier} corrected.
            </Notice>
          ) : null}
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
