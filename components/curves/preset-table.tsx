"use client";
/**
 * The lab's curve library: every preset at its current version, each corner
 * in the units the trade quotes it in, and the peak gain worked out in the
 * browser from the stored curve.
 */
import { createColumnHelper } from "@tanstack/react-table";
import Link from "next/link";
import { useMemo } from "react";
import { when } from "@/components/catalogue/format";
import { Badge } from "@/components/ui/badge";
import { DataTable } from "@/components/ui/data-table";
import { usePresets } from "@/hooks/use-presets";
import { describeCurve, type ResolvedCorner, type ResolvedCurve } from "@/lib/curves";
import { formatDb, formatHz, formatNumber } from "./plot-format";
import type { PresetJson } from "./types";

interface Row extends PresetJson {
  curve: ResolvedCurve | null;
  peakGainDb: number | null;
  peakHz: number | null;
  problem: string | null;
}

const column = createColumnHelper<Row>();

function toRow(p: PresetJson): Row {
  try {
    const d = describeCurve(p.spec);
    return { ...p, curve: d.curve, peakGainDb: d.peakGainDb, peakHz: d.peakHz, problem: null };
  } catch (err) {
    return {
      ...p,
      curve: null,
      peakGainDb: null,
      peakHz: null,
      problem: err instanceof Error ? err.message : String(err),
    };
  }
}

/** Corner cell: the quoted form on top, the other units under it. */
function CornerCell({ corner, rolloff }: { corner: ResolvedCorner | null | undefined; rolloff?: boolean }) {
  if (!corner) return <span className="text-ink-faint">none</span>;
  return (
    <div className="whitespace-nowrap font-mono leading-tight">
      <p className="text-sm text-ink">
        {rolloff ? `${(corner.db10k ?? 0).toFixed(1)} dB` : formatHz(corner.hz)}
      </p>
      <p className="text-xs text-ink-faint">
        {rolloff
          ? `${formatNumber(corner.tauUs)} µs · ${formatHz(corner.hz)}`
          : `${formatNumber(corner.tauUs)} µs`}
      </p>
    </div>
  );
}

export function PresetTable() {
  const { data, isLoading, error } = usePresets();
  const rows = useMemo(() => data?.presets.map(toRow), [data]);

  const columns = useMemo(
    () => [
      column.accessor("name", {
        header: "Name",
        cell: (c) => (
          <div className="min-w-44 max-w-64">
            <Link
              href={`/curves/workbench?preset=${encodeURIComponent(c.row.original.id)}`}
              className="font-medium text-shellac-deep underline-offset-2 hover:underline"
              data-testid="preset-link"
            >
              {c.getValue()}
            </Link>
            {c.row.original.notes ? (
              <p className="line-clamp-1 max-w-xs text-xs text-ink-faint">{c.row.original.notes}</p>
            ) : null}
            {c.row.original.problem ? <p className="text-xs text-alarm">{c.row.original.problem}</p> : null}
          </div>
        ),
      }),
      column.accessor("version", {
        header: "Version",
        cell: (c) => (
          <div className="whitespace-nowrap leading-tight">
            <p className="font-mono">v{c.getValue()}</p>
            {c.row.original.correctsVersions.length ? (
              <p className="text-xs text-moss" title={c.row.original.correctionNote ?? undefined}>
                corrects v{c.row.original.correctsVersions.join(", v")}
              </p>
            ) : null}
            <Link
              href={`/curves/presets/${encodeURIComponent(c.row.original.id)}/uses`}
              className="text-xs text-groove underline-offset-2 hover:underline"
              data-testid="preset-uses"
            >
              uses
            </Link>
          </div>
        ),
      }),
      column.accessor((r) => r.curve?.turnover?.hz ?? 0, {
        id: "turnover",
        header: "Turnover",
        cell: (c) => <CornerCell corner={c.row.original.curve?.turnover} />,
      }),
      column.accessor((r) => r.curve?.shelf?.hz ?? 0, {
        id: "shelf",
        header: "Shelf",
        cell: (c) => <CornerCell corner={c.row.original.curve?.shelf} />,
      }),
      column.accessor((r) => r.curve?.rolloff?.db10k ?? 0, {
        id: "rolloff",
        header: "Rolloff (attenuation at 10 kHz)",
        cell: (c) => <CornerCell corner={c.row.original.curve?.rolloff} rolloff />,
      }),
      column.accessor((r) => r.curve?.highpass?.hz ?? 0, {
        id: "highpass",
        header: "High-pass",
        cell: (c) => <CornerCell corner={c.row.original.curve?.highpass} />,
      }),
      column.accessor((r) => r.peakGainDb ?? -Infinity, {
        id: "peak",
        header: "Peak gain",
        cell: (c) => {
          const r = c.row.original;
          if (r.peakGainDb === null) return <Badge tone="alarm">invalid</Badge>;
          return (
            <div className="whitespace-nowrap font-mono leading-tight">
              <p className={r.peakGainDb > 15 ? "text-sm font-semibold text-shellac-deep" : "text-sm"}>
                {formatDb(r.peakGainDb)}
              </p>
              <p className="text-xs text-ink-faint">at {formatHz(r.peakHz ?? NaN)}</p>
            </div>
          );
        },
      }),
      column.accessor((r) => r.createdAt, {
        id: "updated",
        header: "Updated",
        sortingFn: "datetime",
        cell: (c) => (
          <div className="whitespace-nowrap text-xs">
            <p>{c.row.original.createdBy ?? "—"}</p>
            <p className="text-ink-faint">
              <time dateTime={c.row.original.createdAt}>{when(c.row.original.createdAt)}</time>
            </p>
          </div>
        ),
      }),
    ],
    [],
  );

  return (
    <DataTable
      columns={columns}
      data={rows}
      label="Curve presets"
      urlKey="presets"
      loading={isLoading}
      error={error ? error.message : null}
      empty="No presets yet. Start one in the workbench."
      testId="preset-table"
      defaultSort="name"
    />
  );
}
