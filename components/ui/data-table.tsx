"use client";
import {
  type ColumnDef,
  flexRender,
  type Row,
  type Table,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  type SortingState,
  useReactTable,
} from "@tanstack/react-table";
import { useMemo } from "react";
import { useUrlState } from "@/hooks/use-url-state";
import { cx } from "./cx";

/** Sort as "column" or "-column" in the URL. */
function parseSort(s: string): SortingState {
  return s ? [{ id: s.replace(/^-/, ""), desc: s.startsWith("-") }] : [];
}

export function DataTable<T>({
  columns,
  data,
  label,
  urlKey,
  loading,
  error,
  empty = "Nothing here yet.",
  testId,
  defaultSort = "",
}: {
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- TanStack Table's own type for columns of mixed value types
  columns: ColumnDef<T, any>[];
  data: T[] | undefined;
  label: string;
  urlKey: string;
  loading?: boolean;
  error?: string | null;
  empty?: string;
  testId?: string;
  defaultSort?: string;
}) {
  const [sortParam, setSortParam] = useUrlState(`${urlKey}Sort`, defaultSort);
  const [filter, setFilter] = useUrlState(`${urlKey}Q`);
  const sorting = useMemo(() => parseSort(sortParam), [sortParam]);
  // eslint-disable-next-line react-hooks/incompatible-library -- the app is not built with React Compiler, whose memoizing this guards
  const table = useReactTable({
    data: data ?? [],
    columns,
    state: { sorting, globalFilter: filter },
    onSortingChange: (updater) => {
      const next = typeof updater === "function" ? updater(sorting) : updater;
      setSortParam(next[0] ? `${next[0].desc ? "-" : ""}${next[0].id}` : "");
    },
    onGlobalFilterChange: (v: string) => setFilter(v),
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
  });

  return (
    <div className="space-y-3">
      <div className="flex items-center justify-between gap-3">
        <input
          type="search"
          aria-label={`Filter ${label}`}
          placeholder="Filter…"
          value={filter}
          onChange={(e) => setFilter(e.target.value)}
          className="h-9 w-64 rounded-md border border-paper-edge bg-white px-3 text-sm"
        />
        <span className="text-xs text-ink-faint">
          {loading ? "Loading…" : `${table.getRowModel().rows.length} of ${data?.length ?? 0}`}
        </span>
      </div>
      <TableView
        table={table}
        label={label}
        testId={testId}
        error={error}
        emptyText={loading ? "Loading…" : empty}
        cellAlign="middle"
      />
    </div>
  );
}

/**
 * The table itself, drawn from a TanStack table instance: sortable headers with
 * aria-sort, an error or empty row, striped rows. Shared by DataTable (sorted and
 * filtered in the browser) and the catalogue (sorted and paged on the server).
 */
export function TableView<T>({
  table,
  label,
  testId,
  error,
  emptyText,
  busy,
  rowClassName,
  headerClassName,
  cellAlign = "top",
}: {
  table: Table<T>;
  label: string;
  testId?: string;
  error?: string | null;
  emptyText: string;
  busy?: boolean;
  rowClassName?: (row: Row<T>, index: number) => string | false | undefined;
  headerClassName?: (columnId: string) => string | false | undefined;
  cellAlign?: "top" | "middle";
}) {
  const columnCount = table.getVisibleLeafColumns().length;
  return (
    <div className="overflow-x-auto rounded-lg border border-paper-edge bg-white">
      <table
        className="w-full text-left text-sm"
        aria-label={label}
        data-testid={testId}
        aria-busy={busy || undefined}
      >
        <thead className="bg-paper-deep/60 text-xs uppercase tracking-wide text-ink-soft">
          {table.getHeaderGroups().map((hg) => (
            <tr key={hg.id}>
              {hg.headers.map((h) => {
                const sorted = h.column.getIsSorted();
                return (
                  <th
                    key={h.id}
                    scope="col"
                    className={cx("px-3 py-2.5 font-semibold", headerClassName?.(h.column.id))}
                    aria-sort={sorted ? (sorted === "desc" ? "descending" : "ascending") : undefined}
                  >
                    {h.column.getCanSort() ? (
                      <button
                        type="button"
                        onClick={h.column.getToggleSortingHandler()}
                        className="inline-flex items-center gap-1 uppercase hover:text-ink"
                      >
                        {flexRender(h.column.columnDef.header, h.getContext())}
                        <span aria-hidden className="text-[0.65rem]">
                          {sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "↕"}
                        </span>
                      </button>
                    ) : (
                      flexRender(h.column.columnDef.header, h.getContext())
                    )}
                  </th>
                );
              })}
            </tr>
          ))}
        </thead>
        <tbody>
          {error ? (
            <tr>
              <td colSpan={columnCount} className="px-3 py-6 text-center text-alarm">
                {error}
              </td>
            </tr>
          ) : table.getRowModel().rows.length === 0 ? (
            <tr>
              <td colSpan={columnCount} className="px-3 py-8 text-center text-ink-faint">
                {emptyText}
              </td>
            </tr>
          ) : (
            table.getRowModel().rows.map((row, i) => (
              <tr
                key={row.id}
                className={cx(
                  "border-t border-paper-edge/70",
                  rowClassName ? rowClassName(row, i) : i % 2 === 1 && "bg-paper/40",
                )}
              >
                {row.getVisibleCells().map((cell) => (
                  <td
                    key={cell.id}
                    className={cx("px-3 py-2.5", cellAlign === "middle" ? "align-middle" : "align-top")}
                  >
                    {flexRender(cell.column.columnDef.cell, cell.getContext())}
                  </td>
                ))}
              </tr>
            ))
          )}
        </tbody>
      </table>
    </div>
  );
}
