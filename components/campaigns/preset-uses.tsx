"use client";
/**
 * Where a preset is used: the sides whose current curve rests on each of its versions, with
 * where each stands, counts per version, and, for a version a later one corrects, the
 * campaign that re-chooses and re-renders the selected sides from the correction.
 */
import {
  createColumnHelper,
  getCoreRowModel,
  getSortedRowModel,
  type RowSelectionState,
  type SortingState,
  useReactTable,
} from "@tanstack/react-table";
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useMemo, useState } from "react";
import { when } from "@/components/catalogue/format";
import { StatusBadge } from "@/components/catalogue/status-badge";
import { Badge } from "@/components/ui/badge";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { TableView } from "@/components/ui/data-table";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { Panel } from "@/components/ui/panel";
import { useUrlState } from "@/hooks/use-url-state";
import { usePresetUses, useStartCampaign } from "@/hooks/use-campaigns";
import { AppError } from "@/lib/http/errors";
import { CampaignList } from "./campaign-list";
import type { UseSideJson, UseVersionJson } from "./types";

const column = createColumnHelper<UseSideJson>();

export const useStateLabels: Record<UseSideJson["state"], string> = {
  chosen: "Chosen",
  rendered: "Rendered",
  in_review: "In review",
  approved: "Approved",
};

function VersionCard({
  v,
  current,
  selected,
  onSelect,
}: {
  v: UseVersionJson;
  current: boolean;
  selected: boolean;
  onSelect: () => void;
}) {
  const corrected = v.correctedBy.length > 0;
  return (
    <button
      type="button"
      onClick={onSelect}
      aria-pressed={selected}
      data-testid={`uses-version-${v.version}`}
      className={cx(
        "flex flex-col gap-2 rounded-lg border px-4 py-3 text-left transition-colors",
        selected
          ? "border-shellac bg-shellac-wash/60 shadow-sm"
          : "border-paper-edge bg-white hover:border-ink-faint",
      )}
    >
      <div className="flex items-center justify-between gap-2">
        <span className="font-mono text-lg font-semibold">v{v.version}</span>
        <span className="flex gap-1">
          {current ? <Badge tone="groove">current</Badge> : null}
          {corrected ? <Badge tone="alarm">corrected by v{v.correctedBy.join(", v")}</Badge> : null}
          {v.correctsVersions.length ? (
            <Badge tone="ok">corrects v{v.correctsVersions.join(", v")}</Badge>
          ) : null}
        </span>
      </div>
      <p className="text-2xl font-semibold tabular-nums" data-testid={`uses-version-${v.version}-total`}>
        {v.counts.total}
        <span className="ml-1 text-sm font-normal text-ink-faint">side{v.counts.total === 1 ? "" : "s"}</span>
      </p>
      <dl className="grid grid-cols-4 gap-1 text-xs">
        {(["chosen", "rendered", "in_review", "approved"] as const).map((k) => (
          <div key={k}>
            <dt className="text-ink-faint">{useStateLabels[k]}</dt>
            <dd className="font-mono text-sm text-ink">{v.counts[k]}</dd>
          </div>
        ))}
      </dl>
      <p className="line-clamp-2 text-xs text-ink-soft">{v.correctionNote ?? v.changeNote}</p>
    </button>
  );
}

export function PresetUses({ presetId, canRun }: { presetId: string; canRun: boolean }) {
  const router = useRouter();
  const uses = usePresetUses(presetId);
  const start = useStartCampaign();
  const [versionParam, setVersionParam] = useUrlState("version");
  const [sortParam, setSortParam] = useUrlState("usesSort", "side");
  const [rowSelection, setRowSelection] = useState<RowSelectionState>({});
  const [title, setTitle] = useState("");

  const data = uses.data;
  // The version shown: the one in the address, else the oldest corrected version that still has sides, else all.
  const firstCorrected = data?.versions
    .filter((v) => v.correctedBy.length && v.counts.total)
    .sort((a, b) => a.version - b.version)[0]?.version;
  const version = versionParam ? Number(versionParam) : (firstCorrected ?? null);
  const shownVersion = data?.versions.find((v) => v.version === version);
  const correcting = shownVersion?.correctedBy.length ? Math.max(...shownVersion.correctedBy) : null;
  const rows = useMemo(
    () => (data?.sides ?? []).filter((s) => version === null || s.version === version),
    [data, version],
  );
  // One array per sort: a new one at every render would have the table sort again and reset its
  // page on each render, which re-renders it, for ever.
  const sorting: SortingState = useMemo(
    () => (sortParam ? [{ id: sortParam.replace(/^-/, ""), desc: sortParam.startsWith("-") }] : []),
    [sortParam],
  );
  const selectable = (s: UseSideJson) => !!correcting && !s.runningCampaignId;

  const columns = useMemo(
    () => [
      column.display({
        id: "select",
        header: ({ table }) => (
          <input
            type="checkbox"
            aria-label="Select every side that can join a campaign"
            checked={table.getIsAllRowsSelected()}
            ref={(el) => {
              if (el) el.indeterminate = table.getIsSomeRowsSelected();
            }}
            onChange={table.getToggleAllRowsSelectedHandler()}
            disabled={!table.getRowModel().rows.some((r) => r.getCanSelect())}
            className="h-4 w-4 accent-shellac"
            data-testid="uses-select-all"
          />
        ),
        cell: ({ row }) => (
          <input
            type="checkbox"
            aria-label={`Select ${row.original.shelfMark} side ${row.original.designation}`}
            checked={row.getIsSelected()}
            disabled={!row.getCanSelect()}
            onChange={row.getToggleSelectedHandler()}
            className="h-4 w-4 accent-shellac"
            data-testid="uses-select"
          />
        ),
      }),
      column.accessor((r) => `${r.shelfMark} ${r.designation}`, {
        id: "side",
        header: "Side",
        cell: (c) => (
          <div className="min-w-36">
            <Link
              href={`/catalogue/${c.row.original.discId}`}
              className="font-medium text-shellac-deep underline-offset-2 hover:underline"
            >
              {c.row.original.shelfMark} · {c.row.original.designation}
            </Link>
            <p className="text-xs text-ink-faint">
              {[c.row.original.labelName, c.row.original.catalogueNumber].filter(Boolean).join(" ")}
            </p>
          </div>
        ),
      }),
      column.accessor("title", {
        header: "Title",
        cell: (c) => <span className="line-clamp-1 max-w-64">{c.getValue() || "—"}</span>,
      }),
      column.accessor("version", {
        header: "Version",
        cell: (c) => <span className="font-mono">v{c.getValue()}</span>,
      }),
      column.accessor("status", {
        header: "Stands at",
        cell: (c) => <StatusBadge status={c.getValue()} />,
      }),
      column.accessor((r) => r.engineerName ?? "", {
        id: "engineer",
        header: "Engineer",
        cell: (c) => c.getValue() || <span className="text-ink-faint">—</span>,
      }),
      column.accessor("chosenAt", {
        header: "Curve chosen",
        sortingFn: "datetime",
        cell: (c) => (
          <time dateTime={c.getValue()} className="whitespace-nowrap text-xs text-ink-soft">
            {when(c.getValue())}
          </time>
        ),
      }),
      column.accessor((r) => r.runningCampaignId ?? "", {
        id: "campaign",
        header: "Campaign",
        enableSorting: false,
        cell: (c) =>
          c.row.original.runningCampaignId ? (
            <Link
              href={`/campaigns/${c.row.original.runningCampaignId}`}
              className="text-xs text-groove underline-offset-2 hover:underline"
            >
              running
            </Link>
          ) : null,
      }),
    ],
    [],
  );

  // eslint-disable-next-line react-hooks/incompatible-library -- the app is not built with React Compiler, whose memoizing this guards
  const table = useReactTable({
    data: rows,
    columns,
    getRowId: (r) => r.sideId,
    // One page: nothing to reset when the rows change.
    autoResetPageIndex: false,
    state: { sorting, rowSelection },
    enableRowSelection: (row) => selectable(row.original),
    onRowSelectionChange: setRowSelection,
    onSortingChange: (updater) => {
      const next = typeof updater === "function" ? updater(sorting) : updater;
      setSortParam(next[0] ? `${next[0].desc ? "-" : ""}${next[0].id}` : "");
    },
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
  });
  const selectedIds = table.getSelectedRowModel().rows.map((r) => r.original.sideId);
  const fields = (start.error instanceof AppError && start.error.fields) || {};

  if (uses.isLoading) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (uses.error || !data) return <Notice tone="error">{uses.error?.message ?? "Could not load."}</Notice>;

  const correction = correcting ? data.versions.find((v) => v.version === correcting) : undefined;
  return (
    <div className="space-y-6" data-testid="preset-uses">
      <div className="grid gap-3 sm:grid-cols-2 xl:grid-cols-4" role="group" aria-label="Versions">
        {data.versions.map((v) => (
          <VersionCard
            key={v.version}
            v={v}
            current={v.version === data.preset.currentVersion}
            selected={v.version === version}
            onSelect={() => {
              setRowSelection({});
              setVersionParam(v.version === version ? "" : String(v.version));
            }}
          />
        ))}
      </div>

      {shownVersion && correction ? (
        <Panel title={`Re-render campaign · v${shownVersion.version} → v${correction.version}`}>
          <div className="grid gap-5 lg:grid-cols-[1fr_22rem]">
            <div className="space-y-2 text-sm">
              <p>
                Version {correction.version} corrects version {shownVersion.version}:{" "}
                <span className="text-ink-soft" data-testid="correction-note">
                  {correction.correctionNote}
                </span>
              </p>
              <p className="text-ink-soft">
                A campaign records a new curve choice for each selected side from version {correction.version}
                , keeping the side&apos;s own corner overrides and speeds, with a rationale that cites this
                correction; it queues their renders on the lab&apos;s render queue, and sends sides that were
                rendered, in review or approved back to review once their new access copy is made. Another
                curator approves them, as always.
              </p>
            </div>
            {canRun ? (
              <form
                className="space-y-3 rounded-lg border border-paper-edge bg-paper/50 p-4"
                onSubmit={(e) => {
                  e.preventDefault();
                  start.mutate(
                    {
                      presetId,
                      correctingVersion: correction.version,
                      sideIds: selectedIds,
                      ...(title.trim() ? { title: title.trim() } : {}),
                    },
                    { onSuccess: (r) => router.push(`/campaigns/${r.campaignId}`) },
                  );
                }}
              >
                <TextField
                  id="campaign-title"
                  label="Title (optional)"
                  value={title}
                  onChange={(e) => setTitle(e.target.value)}
                  placeholder={`${data.preset.name}: v${correction.version} in place of v${shownVersion.version}`}
                  errors={fields.title}
                  data-testid="campaign-title"
                />
                <Button
                  type="submit"
                  disabled={!selectedIds.length || start.isPending}
                  className="w-full"
                  data-testid="start-campaign"
                >
                  {start.isPending
                    ? "Starting…"
                    : `Start campaign over ${selectedIds.length} side${selectedIds.length === 1 ? "" : "s"}`}
                </Button>
                {start.error ? <Notice tone="error">{start.error.message}</Notice> : null}
              </form>
            ) : (
              <Notice tone="info">Curators and transfer engineers start campaigns.</Notice>
            )}
          </div>
        </Panel>
      ) : shownVersion && !shownVersion.correctedBy.length ? (
        <Notice tone="info">
          No later version corrects version {shownVersion.version}. To start a campaign, save a new version in
          the workbench marked as correcting it, with a note saying what was wrong.
        </Notice>
      ) : null}

      <div className="space-y-2">
        <div className="flex items-baseline justify-between gap-3">
          <h2 className="text-sm font-semibold uppercase tracking-wide text-ink-soft">
            {version === null ? "Every side on this preset" : `Sides on version ${version}`}
          </h2>
          <span className="text-xs text-ink-faint" data-testid="uses-selected">
            {selectedIds.length} selected · {rows.length} side{rows.length === 1 ? "" : "s"}
          </span>
        </div>
        <TableView
          table={table}
          label="Sides using this preset"
          testId="uses-table"
          emptyText="No side's current curve rests on this version."
          cellAlign="middle"
          rowClassName={(row, i) =>
            row.getIsSelected() ? "bg-shellac-wash/50" : i % 2 === 1 ? "bg-paper/40" : undefined
          }
        />
      </div>

      <Panel title="Campaigns of this preset">
        <CampaignList presetId={presetId} />
      </Panel>
    </div>
  );
}
