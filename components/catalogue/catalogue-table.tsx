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
import { highlightParts, type SearchTerms, searchTerms } from "@/lib/catalogue/highlight";
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
/** The count stops here (lib/catalogue/list-query.ts: countCap). */
const countCapText = "10 000";

/** The columns a person may show or hide (the shelf mark always shows), in table order. */
const optionalColumns = [
  { id: "labelName", label: "Label · catalogue no." },
  { id: "title", label: "First side: title · performers" },
  { id: "year", label: "Recorded" },
  { id: "format", label: "Format" },
  { id: "speed", label: "Speed" },
  { id: "sides", label: "Sides" },
  { id: "accession", label: "Accession" },
  { id: "condition", label: "Condition" },
] as const;
type OptionalColumn = (typeof optionalColumns)[number]["id"];
const defaultColumns: OptionalColumn[] = [
  "labelName",
  "title",
  "year",
  "format",
  "speed",
  "sides",
  "condition",
];

/** The shown columns from the address (`cols=labelName,title,…`); the default set without it. */
function shownColumns(param: string | null): OptionalColumn[] {
  if (param === null) return defaultColumns;
  const wanted = new Set(param.split(","));
  return optionalColumns.map((c) => c.id).filter((id) => wanted.has(id));
}

/** Sides the table lets a person tick for assigning: the ones an assignment can move. */
const assignable = new Set(["catalogued", "returned", "assigned"]);

/** Text with the parts a search matched marked. */
function Marked({ text, terms, numbers }: { text: string; terms: SearchTerms; numbers?: boolean }) {
  return (
    <>
      {highlightParts(text, terms, { numbers }).map((p, i) =>
        p.match ? (
          <mark key={i} className="rounded-sm bg-amber-200/80 px-0.5 text-ink" data-testid="search-match">
            {p.text}
          </mark>
        ) : (
          <span key={i}>{p.text}</span>
        ),
      )}
    </>
  );
}

function yearsText(from: number | null, to: number | null): string {
  if (from === null && to === null) return "";
  if (from === to) return String(from);
  return `${from ?? "?"}–${to ?? "?"}`;
}

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
      fetchJson<{
        rows: DiscListRowJson[];
        total: number;
        totalIsCapped: boolean;
        totalIsEstimated: boolean;
        page: number;
        pageSize: number;
      }>(listUrl),
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
  // Single sides ticked for assigning, beside (or instead of) whole discs.
  const [sideSelection, setSideSelection] = useState<Record<string, string>>({});
  const selectedSideIds = Object.keys(sideSelection);
  const toggleSide = useCallback((sideId: string, name: string) => {
    setSideSelection((sel) => {
      const next = { ...sel };
      if (next[sideId]) delete next[sideId];
      else next[sideId] = name;
      return next;
    });
  }, []);

  const terms = useMemo(() => searchTerms(filters.q), [filters.q]);
  const shown = shownColumns(params.get("cols"));
  const setShown = (ids: OptionalColumn[]) => {
    const same = ids.length === defaultColumns.length && defaultColumns.every((c) => ids.includes(c));
    set({ cols: same ? undefined : ids.join(",") || "none", page: params.get("page") ?? undefined });
  };

  const sorting: SortingState = [{ id: sort.replace(/^-/, ""), desc: sort.startsWith("-") }];
  const total = discs.data?.total ?? 0;
  const capped = discs.data?.totalIsCapped ?? false;
  const estimated = discs.data?.totalIsEstimated ?? false;
  const rowCount = discs.data?.rows.length ?? 0;
  const pageCount = Math.max(1, Math.ceil(total / pageSize));
  const hasNext = capped ? rowCount === pageSize : page < pageCount;

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
        accessorFn: (r) => r.shelfMark,
        header: "Shelf mark",
        cell: ({ row }) => (
          <Link
            href={`/catalogue/${row.original.id}`}
            className="whitespace-nowrap font-mono font-medium text-shellac-deep underline decoration-shellac/30 underline-offset-2 hover:decoration-shellac"
          >
            <Marked text={row.original.shelfMark} terms={terms} numbers />
          </Link>
        ),
      },
      {
        id: "labelName",
        accessorFn: (r) => r.labelName,
        header: "Label · catalogue no.",
        cell: ({ row }) => (
          <div>
            <p>
              {row.original.labelName ? (
                <Marked text={row.original.labelName} terms={terms} />
              ) : (
                <span className="text-ink-faint">no label</span>
              )}
            </p>
            <p className="font-mono text-xs text-ink-faint">
              {row.original.catalogueNumber ? (
                <Marked text={row.original.catalogueNumber} terms={terms} numbers />
              ) : (
                "—"
              )}
            </p>
          </div>
        ),
      },
      {
        id: "title",
        accessorFn: (r) => r.sides[0]?.title ?? "",
        header: "Title · performers",
        cell: ({ row }) => {
          const first = row.original.sides[0];
          return first && (first.title || first.performers) ? (
            <div className="min-w-48 max-w-80" data-testid="first-side">
              <p>
                {first.title ? (
                  <Marked text={first.title} terms={terms} />
                ) : (
                  <span className="text-ink-faint">untitled</span>
                )}
              </p>
              {first.performers ? (
                <p className="text-xs text-ink-soft">
                  <Marked text={first.performers} terms={terms} />
                </p>
              ) : null}
            </div>
          ) : (
            <span className="text-xs text-ink-faint">untitled</span>
          );
        },
      },
      {
        id: "year",
        accessorFn: (r) => r.recordedFromYear ?? "",
        header: "Recorded",
        cell: ({ row }) => (
          <span className="whitespace-nowrap font-mono text-xs">
            {yearsText(row.original.recordedFromYear, row.original.recordedToYear) || (
              <span className="text-ink-faint">—</span>
            )}
          </span>
        ),
      },
      {
        id: "format",
        accessorFn: (r) => r.format,
        header: "Format",
        cell: ({ row }) => formatLabel(row.original.format),
      },
      {
        id: "speed",
        accessorFn: (r) => r.nominalSpeedRpm,
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
                  {canAssign && assignable.has(s.status) ? (
                    <input
                      type="checkbox"
                      aria-label={`Select side ${s.designation} of ${row.original.shelfMark}`}
                      checked={Boolean(sideSelection[s.id])}
                      onChange={() => toggleSide(s.id, `${row.original.shelfMark} side ${s.designation}`)}
                      className="h-3.5 w-3.5 accent-shellac"
                      data-testid={`select-side-${row.original.shelfMark}-${s.designation}`}
                    />
                  ) : canAssign ? (
                    <span className="inline-block w-3.5" aria-hidden />
                  ) : null}
                  <span className="w-6 font-mono font-semibold">{s.designation}</span>
                  <span className="font-mono text-ink-soft">
                    {s.matrixNumber ? <Marked text={s.matrixNumber} terms={terms} numbers /> : "—"}
                  </span>
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
        cell: ({ row }) => (
          <span className="whitespace-nowrap font-mono text-xs">{row.original.accessionIdentifier}</span>
        ),
      },
      {
        id: "condition",
        header: "Condition",
        enableSorting: false,
        cell: ({ row }) => conditionLabels[row.original.conditionGrade] ?? row.original.conditionGrade,
      },
    ],
    [canAssign, terms, sideSelection, toggleSide],
  );
  const columnVisibility = Object.fromEntries(optionalColumns.map((c) => [c.id, shown.includes(c.id)]));

  // eslint-disable-next-line react-hooks/incompatible-library -- the app is not built with React Compiler, whose memoizing this guards
  const table = useReactTable({
    data: discs.data?.rows ?? [],
    columns,
    getRowId: (r) => r.id,
    state: { sorting, rowSelection, columnVisibility, pagination: { pageIndex: page - 1, pageSize } },
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
            selectedIds.length || selectedSideIds.length
              ? "border-shellac/40 bg-shellac-wash/50"
              : "border-dashed border-paper-edge",
          )}
        >
          <p className="mb-2 text-sm text-ink-soft" aria-live="polite" data-testid="assign-selection">
            {selectedIds.length || selectedSideIds.length ? (
              <>
                {selectionSentence(selectedIds.length, Object.values(sideSelection))} Assign{" "}
                {selectedIds.length ? "every side of the ticked discs that is waiting" : "them"} to one
                engineer.{" "}
                <button
                  type="button"
                  className="underline"
                  onClick={() => {
                    setRowSelection({});
                    setSideSelection({});
                  }}
                >
                  Clear selection
                </button>
              </>
            ) : (
              "Tick discs to assign all their sides, or single sides in the Sides column, to a transfer engineer."
            )}
          </p>
          <AssignControl
            discIds={selectedIds}
            sideIds={selectedSideIds}
            what={assignWhat(selectedIds.length, selectedSideIds.length)}
            testId="bulk-assign"
            onAssigned={() => {
              setRowSelection({});
              setSideSelection({});
              void queryClient.invalidateQueries({ queryKey: ["discs"] });
            }}
          />
        </div>
      ) : null}

      <div className="flex flex-wrap items-center justify-between gap-3 text-xs text-ink-faint">
        <span aria-live="polite" data-testid="catalogue-count">
          {discs.isLoading ? "Loading…" : countSentence(total, capped, estimated, anyFilter)}
          {discs.isFetching && !discs.isLoading ? " · updating…" : ""}
        </span>
        <ColumnChooser shown={shown} onChange={setShown} />
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
            {estimated
              ? `Page ${page} of many`
              : capped
                ? `Page ${page} of more than ${Math.floor(total / pageSize)
                    .toLocaleString("en-GB")
                    .replace(/,/g, " ")}`
                : `Page ${Math.min(page, pageCount)} of ${pageCount}`}
          </span>
          <Button
            type="button"
            variant="secondary"
            size="sm"
            disabled={!hasNext}
            onClick={() => set({ page: String(page + 1) })}
          >
            Next →
          </Button>
        </div>
      </nav>
    </div>
  );
}

/** "1 234", the way the page writes counts (a thin space would wrap badly in some fonts). */
function count(n: number): string {
  return n.toLocaleString("en-GB").replace(/,/g, " ");
}

function countSentence(total: number, capped: boolean, estimated: boolean, filtered: boolean): string {
  // A broad search is not counted: the database's estimate says it passes the cap.
  if (estimated) return `More than ${countCapText} discs match, by the database's estimate (not counted)`;
  if (capped) return `More than ${countCapText} discs ${filtered ? "match" : "in the catalogue"}`;
  return `${count(total)} disc${total === 1 ? "" : "s"}${filtered ? (total === 1 ? " matches" : " match") : " in the catalogue"}`;
}

function selectionSentence(discCount: number, sideNames: string[]): string {
  const parts: string[] = [];
  if (discCount) parts.push(`${discCount} disc${discCount === 1 ? "" : "s"}`);
  if (sideNames.length)
    parts.push(sideNames.length <= 3 ? sideNames.join(", ") : `${sideNames.length} single sides`);
  return `Selected: ${parts.join(" and ")}.`;
}

function assignWhat(discCount: number, sideCount: number): string {
  if (!discCount && !sideCount) return "sides";
  if (!discCount) return sideCount === 1 ? "this side" : `${sideCount} sides`;
  const discs = `sides of ${discCount} disc${discCount === 1 ? "" : "s"}`;
  return sideCount ? `${discs} and ${sideCount} more side${sideCount === 1 ? "" : "s"}` : discs;
}

/** Which columns the table shows; the choice lives in the address (`cols`). */
function ColumnChooser({
  shown,
  onChange,
}: {
  shown: OptionalColumn[];
  onChange: (ids: OptionalColumn[]) => void;
}) {
  return (
    <details className="relative" data-testid="column-chooser">
      <summary className="cursor-pointer select-none rounded-md border border-paper-edge bg-white px-3 py-1.5 text-sm text-ink-soft hover:text-ink">
        Columns ({shown.length + 1} of {optionalColumns.length + 1})
      </summary>
      <fieldset className="absolute right-0 z-20 mt-1 w-72 space-y-1.5 rounded-lg border border-paper-edge bg-white p-3 text-sm text-ink shadow-lg">
        <legend className="sr-only">Columns to show</legend>
        <p className="text-xs text-ink-faint">The shelf mark always shows.</p>
        {optionalColumns.map((c) => (
          <label key={c.id} className="flex items-center gap-2">
            <input
              type="checkbox"
              checked={shown.includes(c.id)}
              onChange={(e) =>
                onChange(
                  optionalColumns
                    .map((o) => o.id)
                    .filter((id) => (id === c.id ? e.target.checked : shown.includes(id))),
                )
              }
              className="h-4 w-4 accent-shellac"
              data-testid={`column-${c.id}`}
            />
            {c.label}
          </label>
        ))}
        <button
          type="button"
          className="pt-1 text-xs underline"
          onClick={() => onChange([...defaultColumns])}
        >
          Back to the usual columns
        </button>
      </fieldset>
    </details>
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
