"use client";
import Link from "next/link";
import { useState } from "react";
import { type FileRejection, useDropzone } from "react-dropzone";
import { Badge } from "@/components/ui/badge";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { SelectField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { Panel } from "@/components/ui/panel";
import { formatLabel } from "./format";

interface AccessionChoice {
  id: string;
  identifier: string;
  source: string;
}
interface ColumnGuide {
  name: string;
  hint: string;
  required: boolean;
}
// The answers of the import routes, as lib/catalogue/csv.ts types them (types only: nothing server-side reaches the browser).
type ImportReport = import("@/lib/catalogue/csv").ImportReport;
type Imported = Extract<import("@/lib/catalogue/csv").CommitResult, { ok: true }>;

type Phase = "idle" | "checking" | "importing";

const plural = (n: number, one: string, many = `${one}s`) =>
  `${n.toLocaleString("en-GB")} ${n === 1 ? one : many}`;

function formatSize(bytes: number): string {
  if (bytes < 1024) return `${bytes} bytes`;
  if (bytes < 1024 * 1024) return `${(bytes / 1024).toFixed(1)} kB`;
  return `${(bytes / 1024 / 1024).toFixed(1)} MB`;
}

/** What an answer that is not the one hoped for says, as far as this panel reads it. */
function failureOf(body: unknown): { message?: string; errors?: unknown } {
  const b = (body ?? {}) as { error?: { message?: string }; errors?: unknown };
  return { message: b.error?.message, errors: b.errors };
}

async function send(
  url: string,
  file: File,
  fields: Record<string, string>,
): Promise<{ status: number; body: unknown }> {
  const form = new FormData();
  form.set("file", file, file.name);
  for (const [k, v] of Object.entries(fields)) if (v) form.set(k, v);
  const res = await fetch(url, { method: "POST", body: form, headers: { accept: "application/json" } });
  const body: unknown = await res.json().catch(() => null);
  return { status: res.status, body };
}

export function ImportPanel({
  accessions,
  columns,
  templateCsv,
  maxRows,
}: {
  accessions: AccessionChoice[];
  columns: ColumnGuide[];
  templateCsv: string;
  maxRows: number;
}) {
  const [file, setFile] = useState<File | null>(null);
  const [defaultAccession, setDefaultAccession] = useState("");
  const [report, setReport] = useState<ImportReport | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [phase, setPhase] = useState<Phase>("idle");
  const [done, setDone] = useState<Imported | null>(null);

  async function preview(next: File, accession: string) {
    setPhase("checking");
    setProblem(null);
    setDone(null);
    try {
      const { status, body } = await send("/api/imports/preview", next, { defaultAccession: accession });
      if (status === 200) setReport(body as ImportReport);
      else {
        setReport(null);
        setProblem(failureOf(body).message ?? `The server answered ${status}.`);
      }
    } catch {
      setReport(null);
      setProblem("The file could not be sent. Check the connection and try again.");
    } finally {
      setPhase("idle");
    }
  }

  async function commit() {
    if (!file || !report) return;
    setPhase("importing");
    setProblem(null);
    try {
      const { status, body } = await send("/api/imports", file, {
        defaultAccession,
        confirm: "true",
        sha256: report.sha256,
      });
      if (status === 201) {
        setDone(body as Imported);
        setReport(null);
        setFile(null);
      } else if (status === 422 && Array.isArray(failureOf(body).errors)) {
        // The catalogue changed since the preview: show what is wrong now.
        setReport(body as ImportReport);
        setProblem(failureOf(body).message ?? "Nothing was imported.");
      } else {
        setProblem(failureOf(body).message ?? `The server answered ${status}.`);
      }
    } catch {
      setProblem("The import could not be sent. Nothing was written; try again.");
    } finally {
      setPhase("idle");
    }
  }

  function onDrop(accepted: File[], rejected: FileRejection[]) {
    if (rejected.length) {
      setProblem(
        rejected.length > 1 || accepted.length
          ? "Drop one file at a time."
          : `${rejected[0].file.name} is not a .csv file. Save the sheet as CSV (UTF-8) first.`,
      );
      return;
    }
    const next = accepted[0];
    if (!next) return;
    setFile(next);
    void preview(next, defaultAccession);
  }

  const { getRootProps, getInputProps, isDragActive, open } = useDropzone({
    onDrop,
    accept: { "text/csv": [".csv"] },
    multiple: false,
    maxFiles: 1,
    noClick: true,
    disabled: phase !== "idle",
  });

  const blocked = !report || report.errorCount > 0 || report.discs === 0;
  const existing = report?.duplicates.filter((d) => d.existingDiscId) ?? [];
  const templateHref = `data:text/csv;charset=utf-8,${encodeURIComponent(templateCsv)}`;

  return (
    <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_22rem]">
      <div className="min-w-0 space-y-6">
        {done ? (
          <Notice
            tone="success"
            title={`Imported ${plural(done.imported, "disc")} with ${plural(done.sides, "side")}`}
            testId="import-done"
          >
            <p>
              All {plural(done.rows, "row")} went in as one change, recorded in the provenance log with the
              file&apos;s SHA-256 <span className="font-mono text-xs">{done.sha256.slice(0, 16)}…</span>.
            </p>
            <p className="mt-2 flex flex-wrap gap-4">
              <Link
                href="/catalogue"
                className="font-medium text-shellac-deep underline underline-offset-2"
                data-testid="import-catalogue-link"
              >
                Open the catalogue
              </Link>
              <button
                type="button"
                className="font-medium text-ink-soft underline underline-offset-2 hover:text-ink"
                onClick={() => setDone(null)}
              >
                Import another file
              </button>
            </p>
          </Notice>
        ) : null}

        <Panel title="The file">
          <div className="space-y-5">
            <div className="max-w-md">
              <SelectField
                id="import-accession"
                label="Accession for rows that leave it empty"
                hint="Rows that name an accession keep their own."
                value={defaultAccession}
                disabled={phase !== "idle"}
                onChange={(e) => {
                  setDefaultAccession(e.target.value);
                  if (file) void preview(file, e.target.value);
                }}
              >
                <option value="">None: every row names its accession</option>
                {accessions.map((a) => (
                  <option key={a.id} value={a.id}>
                    {a.identifier} · {a.source}
                  </option>
                ))}
              </SelectField>
            </div>

            <div
              {...getRootProps({
                className: cx(
                  "relative flex flex-col items-center justify-center gap-3 rounded-xl border-2 border-dashed px-6 py-10 text-center transition-colors",
                  isDragActive ? "border-shellac bg-shellac-wash/60" : "border-paper-edge bg-paper/60",
                  phase !== "idle" && "opacity-70",
                ),
              })}
              data-testid="import-dropzone"
            >
              <input {...getInputProps()} data-testid="import-file" aria-label="CSV file to import" />
              <svg width="44" height="44" viewBox="0 0 44 44" aria-hidden className="text-ink-faint">
                {[20, 16, 12, 8].map((r) => (
                  <circle
                    key={r}
                    cx="22"
                    cy="22"
                    r={r}
                    fill="none"
                    stroke="currentColor"
                    strokeWidth="1"
                    opacity={0.35 + r / 60}
                  />
                ))}
                <path
                  d="M22 2 A20 20 0 0 1 42 22"
                  fill="none"
                  stroke="#a9591a"
                  strokeWidth="2"
                  strokeLinecap="round"
                />
                <circle cx="22" cy="22" r="3.5" fill="#a9591a" />
              </svg>
              {phase === "checking" ? (
                <p className="text-sm font-medium text-ink">Checking {file?.name}…</p>
              ) : phase === "importing" ? (
                <p className="text-sm font-medium text-ink">
                  Importing {file?.name}…{" "}
                  <span className="font-normal text-ink-soft">
                    a file of thousands of discs takes a minute or so.
                  </span>
                </p>
              ) : isDragActive ? (
                <p className="text-sm font-medium text-shellac-deep">Drop the CSV to check it</p>
              ) : (
                <>
                  <p className="text-sm text-ink">
                    <span className="font-medium">Drop a .csv file here</span> or{" "}
                    <button
                      type="button"
                      onClick={open}
                      className="font-medium text-shellac-deep underline underline-offset-2"
                    >
                      choose one
                    </button>
                  </p>
                  <p className="text-xs text-ink-faint">
                    One file, up to {maxRows.toLocaleString("en-GB")} rows. Checking writes nothing.
                  </p>
                </>
              )}
            </div>

            {file ? (
              <p
                className="flex flex-wrap items-center gap-x-3 gap-y-1 text-sm text-ink-soft"
                data-testid="import-file-name"
              >
                <span className="font-medium text-ink">{file.name}</span>
                <span>{formatSize(file.size)}</span>
                {report ? (
                  <span className="font-mono text-xs text-ink-faint">
                    SHA-256 {report.sha256.slice(0, 16)}…
                  </span>
                ) : null}
              </p>
            ) : null}
            {problem ? (
              <Notice tone="error" title="Not imported" testId="import-problem">
                {problem}
              </Notice>
            ) : null}
          </div>
        </Panel>

        {report ? (
          <>
            <section
              aria-label="What the file holds"
              className="grid grid-cols-2 gap-3 sm:grid-cols-5"
              data-testid="import-counts"
            >
              <Count label="Rows" value={report.rows} />
              <Count label="Discs to add" value={report.discs} />
              <Count label="Sides" value={report.sides} />
              <Count label="Problems" value={report.errorCount} tone={report.errorCount ? "alarm" : "ok"} />
              <Count
                label="Duplicates"
                value={report.duplicates.length}
                tone={report.duplicates.length ? "alarm" : "ok"}
              />
            </section>

            {report.errorCount > 0 ? (
              <Panel title={`Fix these first · ${plural(report.errorCount, "problem")}`}>
                <p className="mb-3 text-sm text-ink-soft">
                  Row numbers are the spreadsheet&apos;s own: the header is row 1. Fix the rows, save the file
                  as CSV and drop it here again.
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
                    <thead className="sticky top-0 bg-paper-deep text-xs uppercase tracking-wide text-ink-soft">
                      <tr>
                        <th scope="col" className="w-20 px-3 py-2.5 font-semibold">
                          Row
                        </th>
                        <th scope="col" className="w-44 px-3 py-2.5 font-semibold">
                          Column
                        </th>
                        <th scope="col" className="px-3 py-2.5 font-semibold">
                          What is wrong
                        </th>
                      </tr>
                    </thead>
                    <tbody>
                      {report.errors.map((e, i) => (
                        <tr
                          key={`${e.row}-${e.column}-${i}`}
                          className={cx(
                            "border-t border-paper-edge/70 align-top",
                            i % 2 === 1 && "bg-paper/40",
                          )}
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
            ) : null}

            {existing.length > 0 ? (
              <Panel title={`Already in the catalogue · ${plural(existing.length, "shelf mark")}`}>
                <ul className="flex flex-wrap gap-2" data-testid="import-duplicates">
                  {existing.map((d) => (
                    <li key={d.row}>
                      <Link
                        href={`/catalogue?q=${encodeURIComponent(d.shelfMark)}`}
                        className="inline-flex items-center gap-2 rounded-md border border-paper-edge bg-white px-2.5 py-1 text-sm hover:border-ink-faint"
                      >
                        <span className="font-mono">{d.shelfMark}</span>
                        <span className="text-xs text-ink-faint">row {d.row}</span>
                      </Link>
                    </li>
                  ))}
                </ul>
              </Panel>
            ) : null}

            {report.toAdd.length > 0 ? (
              <Panel
                title={
                  report.discs > report.toAdd.length
                    ? `Discs to add · first ${report.toAdd.length} of ${report.discs.toLocaleString("en-GB")}`
                    : `Discs to add · ${report.discs}`
                }
              >
                <div className="max-h-[32rem] overflow-auto rounded-lg border border-paper-edge bg-white">
                  <table
                    className="w-full text-left text-sm"
                    aria-label="Discs to add"
                    data-testid="import-to-add"
                  >
                    <thead className="sticky top-0 bg-paper-deep text-xs uppercase tracking-wide text-ink-soft">
                      <tr>
                        <th scope="col" className="px-3 py-2.5 font-semibold">
                          Row
                        </th>
                        <th scope="col" className="px-3 py-2.5 font-semibold">
                          Shelf mark
                        </th>
                        <th scope="col" className="px-3 py-2.5 font-semibold">
                          Accession
                        </th>
                        <th scope="col" className="px-3 py-2.5 font-semibold">
                          Label · cat. no.
                        </th>
                        <th scope="col" className="px-3 py-2.5 font-semibold">
                          Format
                        </th>
                        <th scope="col" className="px-3 py-2.5 text-right font-semibold">
                          rpm
                        </th>
                        <th scope="col" className="px-3 py-2.5 font-semibold">
                          Sides
                        </th>
                      </tr>
                    </thead>
                    <tbody>
                      {report.toAdd.map((d, i) => (
                        <tr
                          key={d.row}
                          className={cx("border-t border-paper-edge/70", i % 2 === 1 && "bg-paper/40")}
                        >
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
            ) : null}

            <div className="flex flex-wrap items-center justify-between gap-4 rounded-xl border border-paper-edge bg-white/80 px-5 py-4 shadow-sm">
              <p className="max-w-xl text-sm text-ink-soft">
                {report.errorCount > 0
                  ? "Importing is possible once every problem above is fixed."
                  : `All ${plural(report.discs, "disc")} go in as one change: if anything fails, none are written.`}
              </p>
              <Button
                onClick={() => void commit()}
                disabled={blocked || phase !== "idle"}
                data-testid="import-confirm"
              >
                {phase === "importing" ? "Importing…" : `Import ${plural(report.discs, "disc")}`}
              </Button>
            </div>
          </>
        ) : null}
      </div>

      <aside className="space-y-6 self-start">
        <Panel title="The columns">
          <div className="space-y-4">
            <p className="text-sm text-ink-soft">
              One row per side. A disc&apos;s own columns repeat on each of its rows; a disc without sides
              takes one row with the side columns empty. Codes are written as in the template.
            </p>
            <a
              href={templateHref}
              download="rillbook-catalogue-template.csv"
              className={
                "inline-flex h-9 items-center justify-center gap-2 rounded-md border border-paper-edge " +
                "bg-white px-3 text-sm font-medium text-ink transition-colors hover:border-ink-faint"
              }
              data-testid="import-template"
            >
              Download the template CSV
            </a>
            <p className="text-sm text-ink-soft">
              Required:{" "}
              {columns
                .filter((c) => c.required)
                .map((c) => c.name)
                .join(", ")}
              .
            </p>
            <details className="group rounded-lg border border-paper-edge bg-white/70">
              <summary className="cursor-pointer select-none px-3 py-2 text-sm font-medium text-ink hover:bg-paper-deep/50">
                What goes in each column
              </summary>
              <dl className="divide-y divide-paper-edge/70 border-t border-paper-edge px-3 text-sm">
                {columns.map((c) => (
                  <div key={c.name} className="py-2">
                    <dt className="flex items-center gap-2 font-mono text-xs text-ink">
                      {c.name}
                      {c.required ? <Badge tone="accent">required</Badge> : null}
                    </dt>
                    <dd className="mt-0.5 text-xs text-ink-soft">{c.hint}</dd>
                  </div>
                ))}
              </dl>
            </details>
          </div>
        </Panel>
      </aside>
    </div>
  );
}

function Count({ label, value, tone }: { label: string; value: number; tone?: "ok" | "alarm" }) {
  return (
    <div className="rounded-lg border border-paper-edge bg-white/80 px-4 py-3 shadow-sm">
      <p className="text-xs font-semibold uppercase tracking-wide text-ink-faint">{label}</p>
      <p
        className={cx(
          "mt-1 font-display text-2xl tabular-nums",
          tone === "alarm" ? "text-alarm" : tone === "ok" ? "text-moss" : "text-ink",
        )}
      >
        {value.toLocaleString("en-GB")}
      </p>
    </div>
  );
}
