"use client";
import { keepPreviousData, useQuery, useQueryClient } from "@tanstack/react-query";
import {
  type ColumnDef,
  getCoreRowModel,
  type RowSelectionState,
  type SortingState,
  useReactTable,
} from "@tanstack/react-table";
import Link from "next/link";
import { usePathname, useRouter, useSearchParams } from "next/navigation";
import { useCallback, useEffect, useMemo, useState } from "react";
import { Button, buttonClass } from "@/components/ui/button";
import { TableView } from "@/components/ui/data-table";
import { cx } from "@/components/ui/cx";
import { fetchJson } from "@/lib/http/client";
import {
  discFormats,
  formatLabels,
  nominalSpeeds,
  sideStatuses,
  statusLabels,
} from "@/lib/validation/catalogue";
import { AssignControl, useEngineers } from "./assign-control";
import { conditionLabels, formatLabel, speedLabel } from "./format";
import { StatusBadge } from "./status-badge";
import type { AccessionJson, DiscListRowJson } from "./types";

/** The URL keys of the view; everything else in the query string is left alone. */
export const filterKeys = ["q", "format", "status", "accession", "engineer", "speed"] as const;
type FilterKey = (typeof filterKeys)[number];
const pageSizes = [25, 50, 100];
const defaultSort = "shelfMark";

function useViewParams() {
  const params = useSearchParams();
  const router = useRouter();
  const pathname = usePathname();
  const set = useCallback(
    (changes: Record<string, string | undefined>) => {
      const q = new URLSearchParams(params.toString());
      for (const [k, v] of Object.entries(changes)) {
        if (v) q.set(k, v);
        else q.delete(k);
      }
      // A new filter or sort starts from the first page.
      if (!("page" in changes)) q.delete("page");
      const s = q.toString();
      router.replace(s ? `${pathname}?${s}` : pathname, { scroll: false });
    },
    [params, router, pathname],
  );
  return { params, set };
}

interface Props {
  canAssign: boolean;
  /** The signed-in engineer (for "assigned to me"); null for other roles. */
  self: { id: string; name: string } | null;
}

export function CatalogueTable({ canAssign, self }: Props) {
  const { params, set } = useViewParams();
  const queryClient = useQueryClient();
  const filters = Object.fromEntries(filterKeys.map((k) => [k, params.get(k) ?? ""])) as Record<
    FilterKey,
    string
  >;
  const sort = params.get("sort") || defaultSort;
  const page = Math.max(1, Number(params.get("page")) || 1);
  const pageSize = pageSizes.includes(Number(params.get("size"))) ? Number(params.get("size")) : 50;

  const apiQuery = useMemo(() => {
    const q = new URLSearchParams();
    for (const k of filterKeys) if (filters[k]) q.set(k, filters[k]);
    q.set("sort", sort);
    return q;
    // eslint-disable-next-line react-hooks/exhaustive-deps -- filters and sort are read from params: a new query only when the address changes
  }, [params]);
  const listUrl = `/api/discs?${apiQuery}&page=${page}&pageSize=${pageSize}`;

  const discs = useQuery({
    queryKey: ["discs", listUrl],
    queryFn: () =>
      fetchJson<{ rows: DiscListRowJson[]; total: number; page: number; pageSize: number }>(listUrl),
    placeholderData: keepPreviousData,
  });
  const accessions = useQuery({
    queryKey: ["accessions"],
    queryFn: () => fetchJson<{ accessions: AccessionJson[] }>("/api/accessions"),
    staleTime: 60_000,
  });
  const engineers = useEngineers(canAssign);
  const engineerOptions = canAssign
    ? (engineers.data?.engineers ?? [])
    : self
      ? [{ id: self.id, name: `${self.name} (me)` }]
      : [];

  // The search box answers as you type, but writes to the URL after a pause.
  const [search, setSearch] = useState(filters.q);
  useEffect(() => {
    const q = params.get("q") ?? "";
    setSearch((s) => (s.trim() === q ? s : q));
  }, [params]);
  useEffect(() => {
    if (search.trim() === (params.get("q") ?? "")) return;
    const t = setTimeout(() => set({ q: search.trim() || undefined }), 300);
    return () => clearTimeout(t);
  }, [search, params, set]);

  const [rowSelection, setRowSelection] = useState<RowSelectionState>({});
  const selectedIds = Object.keys(rowSelection).filter((k) => rowSelection[k]);

  const sorting: SortingState = [{ id: sort.replace(/^-/, ""), desc: sort.startsWith("-") }];
  const total = discs.data?.total ?? 0;
  const pageCount = Math.max(1, Math.ceil(total / pageSize));

  const columns = useMemo<ColumnDef<DiscListRowJson>[]>(
    () => [
      ...(canAssign
        ? [
            {
              id: "select",
              enableSorting: false,
              header: ({ table }) => (
                <input
                  type="checkbox"
                  aria-label="Select every disc on this page"
                  checked={table.getIsAllPageRowsSelected()}
                  ref={(el) => {
                    if (el) el.indeterminate = table.getIsSomePageRowsSelected();
                  }}
                  onChange={table.getToggleAllPageRowsSelectedHandler()}
                  className="h-4 w-4 accent-shellac"
                />
              ),
              cell: ({ row }) => (
                <input
                  type="checkbox"
                  aria-label={`Select ${row.original.shelfMark}`}
                  checked={row.getIsSelected()}
                  onChange={row.getToggleSelectedHandler()}
                  className="h-4 w-4 accent-shellac"
                />
              ),
            } satisfies ColumnDef<DiscListRowJson>,
          ]
        : []),
      {
        id: "shelfMark",
        header: "Shelf mark",
        cell: ({ row }) => (
          <Link
            href={`/catalogue/${row.original.id}`}
            className="font-mono font-medium text-shellac-deep underline decoration-shellac/30 underline-offset-2 hover:decoration-shellac"
          >
            {row.original.shelfMark}
          </Link>
        ),
      },
      {
        id: "labelName",
        header: "Label · catalogue no.",
        cell: ({ row }) => (
          <div>
            <p>{row.original.labelName || <span className="text-ink-faint">no label</span>}</p>
            <p className="font-mono text-xs text-ink-faint">{row.original.catalogueNumber || "—"}</p>
          </div>
        ),
      },
      { id: "format", header: "Format", cell: ({ row }) => formatLabel(row.original.format) },
      {
        id: "speed",
        header: "Speed",
        cell: ({ row }) => <span className="font-mono">{speedLabel(row.original.nominalSpeedRpm)}</span>,
      },
      {
        id: "sides",
        header: "Sides",
        enableSorting: false,
        cell: ({ row }) =>
          row.original.sides.length ? (
            <ul className="space-y-1">
              {row.original.sides.map((s) => (
                <li key={s.id} className="flex flex-wrap items-center gap-x-2 gap-y-0.5 text-xs">
                  <span className="w-6 font-mono font-semibold">{s.designation}</span>
                  <span className="font-mono text-ink-soft">{s.matrixNumber || "—"}</span>
                  <StatusBadge status={s.status} />
                  {s.assignedEngineerName ? (
                    <span className="text-ink-faint">{s.assignedEngineerName}</span>
                  ) : null}
                </li>
              ))}
            </ul>
          ) : (
            <span className="text-xs text-ink-faint">no sides logged</span>
          ),
      },
      {
        id: "accession",
        header: "Accession",
        enableSorting: false,
        cell: ({ row }) => <span className="font-mono text-xs">{row.original.accessionIdentifier}</span>,
      },
      {
        id: "condition",
        header: "Condition",
        enableSorting: false,
        cell: ({ row }) => conditionLabels[row.original.conditionGrade] ?? row.original.conditionGrade,
      },
    ],
    [canAssign],
  );

  // eslint-disable-next-line react-hooks/incompatible-library -- the app is not built with React Compiler, whose memoizing this guards
  const table = useReactTable({
    data: discs.data?.rows ?? [],
    columns,
    getRowId: (r) => r.id,
    state: { sorting, rowSelection, pagination: { pageIndex: page - 1, pageSize } },
    manualSorting: true,
    manualPagination: true,
    manualFiltering: true,
    pageCount,
    enableRowSelection: canAssign,
    enableSortingRemoval: false,
    onRowSelectionChange: setRowSelection,
    onSortingChange: (updater) => {
      const next = typeof updater === "function" ? updater(sorting) : updater;
      const s = next[0] ? `${next[0].desc ? "-" : ""}${next[0].id}` : defaultSort;
      set({ sort: s === defaultSort ? undefined : s });
    },
    getCoreRowModel: getCoreRowModel(),
  });

  const anyFilter = filterKeys.some((k) => filters[k]);
  const selectClass = "h-9 w-full rounded-md border border-paper-edge bg-white px-2 text-sm";

  return (
    <div className="space-y-4">
      <form
        role="search"
        aria-label="Find discs"
        onSubmit={(e) => e.preventDefault()}
        className={
          "grid gap-3 rounded-lg border border-paper-edge bg-white/70 p-4 sm:grid-cols-2 " +
          "lg:grid-cols-[minmax(16rem,2fr)_repeat(5,minmax(8rem,1fr))_auto]"
        }
      >
        <div className="space-y-1">
          <label
            htmlFor="catalogue-search"
            className="block text-xs font-semibold uppercase tracking-wide text-ink-soft"
          >
            Search
          </label>
          <input
            id="catalogue-search"
            type="search"
            value={search}
            onChange={(e) => setSearch(e.target.value)}
            placeholder="Label, catalogue or matrix no., title, performer"
            className="h-9 w-full rounded-md border border-paper-edge bg-white px-3 text-sm"
            data-testid="catalogue-search"
          />
        </div>
        <FilterSelect
          id="filter-format"
          label="Format"
          value={filters.format}
          onChange={(v) => set({ format: v })}
          className={selectClass}
        >
          {discFormats.map((f) => (
            <option key={f} value={f}>
              {formatLabels[f]}
            </option>
          ))}
        </FilterSelect>
        <FilterSelect
          id="filter-status"
          label="Side status"
          value={filters.status}
          onChange={(v) => set({ status: v })}
          className={selectClass}
        >
          {sideStatuses.map((s) => (
            <option key={s} value={s}>
              {statusLabels[s]}
            </option>
          ))}
        </FilterSelect>
        <FilterSelect
          id="filter-accession"
          label="Accession"
          value={filters.accession}
          onChange={(v) => set({ accession: v })}
          className={selectClass}
        >
          {accessions.data?.accessions.map((a) => (
            <option key={a.id} value={a.id}>
              {a.identifier}
            </option>
          ))}
        </FilterSelect>
        <FilterSelect
          id="filter-engineer"
          label="Engineer"
          value={filters.engineer}
          onChange={(v) => set({ engineer: v })}
          className={selectClass}
          disabled={!engineerOptions.length && !filters.engineer}
        >
          {engineerOptions.map((e) => (
            <option key={e.id} value={e.id}>
              {e.name}
            </option>
          ))}
          {filters.engineer && !engineerOptions.some((e) => e.id === filters.engineer) ? (
            <option value={filters.engineer}>Chosen engineer</option>
          ) : null}
        </FilterSelect>
        <FilterSelect
          id="filter-speed"
          label="Speed (rpm)"
          value={filters.speed}
          onChange={(v) => set({ speed: v })}
          className={selectClass}
        >
          {nominalSpeeds.map((s) => (
            <option key={s} value={String(s)}>
              {speedLabel(s)}
            </option>
          ))}
          {filters.speed && !nominalSpeeds.map(String).includes(filters.speed) ? (
            <option value={filters.speed}>{speedLabel(filters.speed)}</option>
          ) : null}
        </FilterSelect>
        <div className="flex items-end">
          <Button
            type="button"
            variant="quiet"
            size="sm"
            className="h-9"
            disabled={!anyFilter}
            onClick={() => {
              setSearch("");
              set(Object.fromEntries(filterKeys.map((k) => [k, undefined])));
            }}
          >
            Clear
          </Button>
        </div>
      </form>

      {canAssign ? (
        <div
          className={cx(
            "rounded-lg border px-4 py-3",
            selectedIds.length ? "border-shellac/40 bg-shellac-wash/50" : "border-dashed border-paper-edge",
          )}
        >
          <p className="mb-2 text-sm text-ink-soft" aria-live="polite">
            {selectedIds.length ? (
              <>
                <strong className="text-ink">{selectedIds.length}</strong> disc
                {selectedIds.length === 1 ? "" : "s"} selected: assign every side that is waiting to one
                engineer.{" "}
                <button type="button" className="underline" onClick={() => setRowSelection({})}>
                  Clear selection
                </button>
              </>
            ) : (
              "Tick discs to assign their sides to a transfer engineer."
            )}
          </p>
          <AssignControl
            discIds={selectedIds}
            what={
              selectedIds.length
                ? `sides of ${selectedIds.length} disc${selectedIds.length === 1 ? "" : "s"}`
                : "sides"
            }
            testId="bulk-assign"
            onAssigned={() => {
              setRowSelection({});
              void queryClient.invalidateQueries({ queryKey: ["discs"] });
            }}
          />
        </div>
      ) : null}

      <div className="flex items-center justify-between text-xs text-ink-faint">
        <span aria-live="polite" data-testid="catalogue-count">
          {discs.isLoading
            ? "Loading…"
            : `${total} disc${total === 1 ? "" : "s"}${anyFilter ? (total === 1 ? " matches" : " match") : " in the catalogue"}`}
          {discs.isFetching && !discs.isLoading ? " · updating…" : ""}
        </span>
      </div>

      <TableView
        table={table}
        label="Discs"
        testId="catalogue-table"
        busy={discs.isFetching}
        error={discs.error?.message}
        emptyText={
          discs.isLoading
            ? "Loading…"
            : anyFilter
              ? "No disc matches these filters."
              : "No discs catalogued yet."
        }
        rowClassName={(row, i) => (row.getIsSelected() ? "bg-shellac-wash/40" : i % 2 === 1 && "bg-paper/40")}
        headerClassName={(id) => id === "select" && "w-10"}
      />

      <nav aria-label="Pages" className="flex flex-wrap items-center justify-between gap-3 text-sm">
        <div className="flex items-center gap-2">
          <label htmlFor="page-size" className="text-ink-soft">
            Discs per page
          </label>
          <select
            id="page-size"
            value={pageSize}
            onChange={(e) => set({ size: e.target.value === "50" ? undefined : e.target.value })}
            className="h-8 rounded border border-paper-edge bg-white px-2 text-sm"
          >
            {pageSizes.map((n) => (
              <option key={n} value={n}>
                {n}
              </option>
            ))}
          </select>
        </div>
        <div className="flex items-center gap-2">
          <Button
            type="button"
            variant="secondary"
            size="sm"
            disabled={page <= 1}
            onClick={() => set({ page: page - 1 > 1 ? String(page - 1) : undefined })}
          >
            ← Previous
          </Button>
          <span className="px-2 text-ink-soft" data-testid="catalogue-page">
            Page {Math.min(page, pageCount)} of {pageCount}
          </span>
          <Button
            type="button"
            variant="secondary"
            size="sm"
            disabled={page >= pageCount}
            onClick={() => set({ page: String(page + 1) })}
          >
            Next →
          </Button>
        </div>
      </nav>
    </div>
  );
}

function FilterSelect({
  id,
  label,
  value,
  onChange,
  className,
  disabled,
  children,
}: {
  id: string;
  label: string;
  value: string;
  onChange: (v: string | undefined) => void;
  className: string;
  disabled?: boolean;
  children: React.ReactNode;
}) {
  return (
    <div className="space-y-1">
      <label htmlFor={id} className="block text-xs font-semibold uppercase tracking-wide text-ink-soft">
        {label}
      </label>
      <select
        id={id}
        value={value}
        onChange={(e) => onChange(e.target.value || undefined)}
        className={className}
        disabled={disabled}
      >
        <option value="">Any</option>
        {children}
      </select>
    </div>
  );
}

/** The export of exactly what the table shows (filters and sort, every page). */
export function ExportViewLink() {
  const params = useSearchParams();
  const q = new URLSearchParams();
  for (const k of filterKeys) {
    const v = params.get(k);
    if (v) q.set(k, v);
  }
  q.set("sort", params.get("sort") || defaultSort);
  return (
    <a
      href={`/api/discs/export?${q}`}
      className={buttonClass({ variant: "secondary" })}
      data-testid="export-view"
    >
      Export view
    </a>
  );
}
