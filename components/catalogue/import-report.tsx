// The parts of an import preview: the problems, the discs changed since the export, the
// changes to catalogued discs (before → after), and the new discs. Each reads one part
// of the report lib/catalogue/csv.ts builds.
import Link from "next/link";
import type { ReactNode } from "react";
import { Badge } from "@/components/ui/badge";
import { cx } from "@/components/ui/cx";
import { Panel } from "@/components/ui/panel";
import { discFieldLabels, fieldText, sideFieldLabels } from "./fields";
import { formatLabel } from "./format";

// The answers of the import routes, as lib/catalogue/csv.ts types them (types only: nothing server-side reaches the browser).
export type ImportReport = import("@/lib/catalogue/csv").ImportReport;
export type ImportDone = import("@/lib/catalogue/csv").ImportDone;
type DiscUpdate = ImportReport["toUpdate"][number];
type DiscConflict = ImportReport["conflicts"][number];
type FieldChange = DiscUpdate["changes"]["fields"][number];

export const plural = (n: number, one: string, many = `${one}s`) =>
  `${n.toLocaleString("en-GB")} ${n === 1 ? one : many}`;

const headCell = "px-3 py-2.5 font-semibold";
const stickyHead = "sticky top-0 bg-paper-deep text-xs uppercase tracking-wide text-ink-soft";

/** A time as the log records it: ISO date and UTC time, whatever the browser's locale. */
function utc(at: string): string {
  return `${at.slice(0, 10)} ${at.slice(11, 16)} UTC`;
}

function listed(shown: number, total: number, what: string): string {
  return total > shown
    ? `${what} · first ${shown} of ${total.toLocaleString("en-GB")}`
    : `${what} · ${total}`;
}

export function ImportErrors({ report }: { report: ImportReport }) {
  if (report.errorCount === 0) return null;
  return (
    <Panel title={`Fix these first · ${plural(report.errorCount, "problem")}`}>
      <p className="mb-3 text-sm text-ink-soft">
        Row numbers are the spreadsheet&apos;s own: the header is row 1. Every problem of a row is listed. Fix
        the rows, save the file as CSV and drop it here again.
        {report.errors.length < report.errorCount
          ? ` The first ${plural(report.errors.length, "problem")} are listed.`
          : ""}
      </p>
      <div className="max-h-[28rem] overflow-auto rounded-lg border border-paper-edge bg-white">
        <table
          className="w-full text-left text-sm"
          aria-label="Problems in the file"
          data-testid="import-errors"
        >
          <thead className={stickyHead}>
            <tr>
              <th scope="col" className={cx("w-20", headCell)}>
                Row
              </th>
              <th scope="col" className={cx("w-44", headCell)}>
                Column
              </th>
              <th scope="col" className={headCell}>
                What is wrong
              </th>
            </tr>
          </thead>
          <tbody>
            {report.errors.map((e, i) => (
              <tr
                key={`${e.row}-${e.column}-${i}`}
                className={cx("border-t border-paper-edge/70 align-top", i % 2 === 1 && "bg-paper/40")}
                data-testid="import-error"
              >
                <td className="px-3 py-2 font-mono tabular-nums text-ink">{e.row}</td>
                <td className="px-3 py-2 font-mono text-xs text-alarm">{e.column || "—"}</td>
                <td className="px-3 py-2 text-ink">{e.message}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </Panel>
  );
}

function fieldNames(changed: string[]): string {
  return changed.map((f) => (discFieldLabels[f] ?? f).toLowerCase()).join(", ") || "no catalogue field";
}

export function ImportConflicts({ report }: { report: ImportReport }) {
  if (report.conflictCount === 0) return null;
  return (
    <Panel
      title={listed(report.conflicts.length, report.conflictCount, "Changed in Rillbook since the export")}
    >
      <p className="mb-3 text-sm text-ink-soft">
        Someone saved these discs after the file was exported, so the file would overwrite their work. Nothing
        is imported while they are listed: export these discs again, make your changes in the new file, and
        drop it here.
      </p>
      <ul className="space-y-2" data-testid="import-conflicts">
        {report.conflicts.map((c: DiscConflict) => (
          <li
            key={c.discId}
            className="rounded-lg border border-alarm/30 bg-alarm-wash/40 px-4 py-3 text-sm"
            data-testid="import-conflict"
          >
            <p className="flex flex-wrap items-baseline gap-x-3">
              <Link
                href={`/catalogue/${c.discId}`}
                className="font-mono font-medium text-ink underline-offset-2 hover:underline"
              >
                {c.shelfMark}
              </Link>
              <span className="text-xs text-ink-faint">row {c.row}</span>
              <span className="text-xs text-ink-soft">
                exported at version {c.exportedVersion}, now version {c.currentVersion}
              </span>
            </p>
            <ul className="mt-1 space-y-0.5">
              {c.edits.map((e, i) => (
                <li key={i} className="text-ink">
                  <span className="font-medium">{e.by ?? "Someone"}</span> changed {fieldNames(e.changed)}{" "}
                  <span className="text-xs text-ink-faint">({utc(e.at)})</span>
                </li>
              ))}
            </ul>
          </li>
        ))}
      </ul>
    </Panel>
  );
}

function Change({ label, before, after }: { label: string; before: ReactNode; after: ReactNode }) {
  return (
    <tr className="align-top" data-testid="import-change">
      <th scope="row" className="w-44 py-1 pr-3 text-left font-medium text-ink-soft">
        {label}
      </th>
      <td className="break-words py-1 pr-2 text-ink-soft line-through decoration-ink-faint/60">{before}</td>
      <td aria-hidden className="w-6 py-1 text-ink-faint">
        →
      </td>
      <td className="break-words py-1 font-medium text-ink">{after}</td>
    </tr>
  );
}

const shown = (c: FieldChange) => ({
  before: fieldText(c.field, c.before),
  after: fieldText(c.field, c.after),
});

export function ImportUpdates({ report }: { report: ImportReport }) {
  if (report.updates === 0) return null;
  return (
    <Panel title={listed(report.toUpdate.length, report.updates, "Changes to catalogued discs")}>
      <p className="mb-3 text-sm text-ink-soft">
        {report.clearEmpty ? "Empty cells clear their field." : "Empty cells leave their field as it is."}{" "}
        {report.unchanged
          ? `${plural(report.unchanged, "disc")} in the file ${report.unchanged === 1 ? "is" : "are"} unchanged and not listed.`
          : ""}
      </p>
      <ol className="space-y-3" data-testid="import-updates">
        {report.toUpdate.map((u: DiscUpdate) => (
          <li
            key={u.discId}
            className="rounded-lg border border-paper-edge bg-white px-4 py-3"
            data-testid="import-update"
            data-shelf-mark={u.shelfMark}
          >
            <p className="mb-1.5 flex flex-wrap items-baseline gap-x-3">
              <Link
                href={`/catalogue/${u.discId}`}
                className="font-mono font-medium text-ink underline-offset-2 hover:underline"
              >
                {u.shelfMark}
              </Link>
              <span className="text-xs text-ink-faint">
                row {u.row} · version {u.version}
              </span>
            </p>
            <table className="w-full table-fixed text-sm" aria-label={`Changes to ${u.shelfMark}`}>
              <tbody>
                {u.changes.fields.map((c) => (
                  <Change key={c.field} label={discFieldLabels[c.field] ?? c.field} {...shown(c)} />
                ))}
                {u.changes.sides.flatMap((s) =>
                  s.added
                    ? [
                        <Change
                          key={`side-${s.designation}`}
                          label={`Side ${s.designation}`}
                          before="—"
                          after={`new side${
                            s.changes.length
                              ? `: ${s.changes
                                  .filter((c) => c.field !== "designation")
                                  .map((c) => `${sideFieldLabels[c.field] ?? c.field} ${String(c.after)}`)
                                  .join(", ")}`
                              : ""
                          }`}
                        />,
                      ]
                    : s.changes.map((c) => (
                        <Change
                          key={`side-${s.designation}-${c.field}`}
                          label={`Side ${s.designation} · ${sideFieldLabels[c.field] ?? c.field}`}
                          {...shown(c)}
                        />
                      )),
                )}
              </tbody>
            </table>
          </li>
        ))}
      </ol>
    </Panel>
  );
}

export function ImportAdds({ report }: { report: ImportReport }) {
  if (report.toAdd.length === 0) return null;
  return (
    <Panel title={listed(report.toAdd.length, report.discs, "New discs")}>
      <div className="max-h-[32rem] overflow-auto rounded-lg border border-paper-edge bg-white">
        <table className="w-full text-left text-sm" aria-label="Discs to add" data-testid="import-to-add">
          <thead className={stickyHead}>
            <tr>
              <th scope="col" className={headCell}>
                Row
              </th>
              <th scope="col" className={headCell}>
                Shelf mark
              </th>
              <th scope="col" className={headCell}>
                Accession
              </th>
              <th scope="col" className={headCell}>
                Label · cat. no.
              </th>
              <th scope="col" className={headCell}>
                Format
              </th>
              <th scope="col" className={cx("text-right", headCell)}>
                rpm
              </th>
              <th scope="col" className={headCell}>
                Sides
              </th>
            </tr>
          </thead>
          <tbody>
            {report.toAdd.map((d, i) => (
              <tr key={d.row} className={cx("border-t border-paper-edge/70", i % 2 === 1 && "bg-paper/40")}>
                <td className="px-3 py-2 font-mono tabular-nums text-ink-faint">{d.row}</td>
                <td className="whitespace-nowrap px-3 py-2 font-mono font-medium">{d.shelfMark}</td>
                <td className="px-3 py-2 text-ink-soft">{d.accession || "—"}</td>
                <td className="px-3 py-2">
                  {[d.labelName, d.catalogueNumber].filter(Boolean).join(" · ") || (
                    <span className="text-ink-faint">—</span>
                  )}
                </td>
                <td className="px-3 py-2">{formatLabel(d.format)}</td>
                <td className="px-3 py-2 text-right tabular-nums">{d.nominalSpeedRpm}</td>
                <td className="px-3 py-2">
                  {d.sides.length ? (
                    <span className="flex gap-1">
                      {d.sides.map((s) => (
                        <Badge key={s}>{s}</Badge>
                      ))}
                    </span>
                  ) : (
                    <span className="text-xs text-ink-faint">no sides</span>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </Panel>
  );
}
