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
import {
  ImportAdds,
  ImportConflicts,
  type ImportDone,
  ImportErrors,
  type ImportReport,
  ImportUpdates,
  plural,
} from "./import-report";

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

type Phase = "idle" | "checking" | "importing";

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
): Promise<{ status: number; body: ImportAnswer | null }> {
  const form = new FormData();
  form.set("file", file, file.name);
  for (const [k, v] of Object.entries(fields)) if (v) form.set(k, v);
  const res = await fetch(url, { method: "POST", body: form, headers: { accept: "application/json" } });
  const body = (await res.json().catch(() => null)) as ImportAnswer | null;
  return { status: res.status, body };
}

/** A preview (200), an import (201), or a refusal: with the file's report when it has problems. */
type ImportAnswer = Partial<ImportReport & ImportDone> & {
  error?: { message?: string; details?: ImportReport };
};

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
  const [done, setDone] = useState<ImportDone | null>(null);
  const [clearEmpty, setClearEmpty] = useState(false);
  const options = (accession: string, clear: boolean) => ({
    defaultAccession: accession,
    clearEmpty: clear ? "true" : "",
  });

  async function preview(next: File, accession: string, clear: boolean) {
    setPhase("checking");
    setProblem(null);
    setDone(null);
    try {
      const { status, body } = await send("/api/imports/preview", next, options(accession, clear));
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
        ...options(defaultAccession, clearEmpty),
        confirm: "true",
        sha256: report.sha256,
      });
      if (status === 201) {
        setDone(body as ImportDone);
        setReport(null);
        setFile(null);
      } else if (status === 422 && body?.error?.details) {
        // The catalogue changed since the preview: show what is wrong now.
        setReport(body.error.details);
        setProblem(body.error.message ?? "Nothing was imported.");
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
    void preview(next, defaultAccession, clearEmpty);
  }

  const { getRootProps, getInputProps, isDragActive, open } = useDropzone({
    onDrop,
    accept: { "text/csv": [".csv"] },
    multiple: false,
    maxFiles: 1,
    noClick: true,
    disabled: phase !== "idle",
  });

  const blocked =
    !report || report.errorCount > 0 || report.conflictCount > 0 || report.discs + report.updates === 0;

  const templateHref = `data:text/csv;charset=utf-8,${encodeURIComponent(templateCsv)}`;

  return (
    <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_22rem]">
      <div className="min-w-0 space-y-6">
        {done ? (
          <Notice tone="success" title={doneTitle(done)} testId="import-done">
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
                  if (file) void preview(file, e.target.value, clearEmpty);
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
              className="grid grid-cols-2 gap-3 sm:grid-cols-3 lg:grid-cols-6"
              data-testid="import-counts"
            >
              <Count label="Rows" value={report.rows} />
              <Count label="New discs" value={report.discs} />
              <Count label="Discs changed" value={report.updates} />
              <Count label="Unchanged" value={report.unchanged} />
              <Count
                label="Conflicts"
                value={report.conflictCount}
                tone={report.conflictCount ? "alarm" : "ok"}
              />
              <Count label="Problems" value={report.errorCount} tone={report.errorCount ? "alarm" : "ok"} />
            </section>
            <p className="-mt-3 text-xs text-ink-faint" data-testid="import-read-as">
              Cells separated by {report.separatedBy}. Rows whose shelf mark is in the catalogue update that
              disc; the others add new discs.
            </p>

            {report.updates + report.unchanged + report.conflictCount > 0 || clearEmpty ? (
              <label
                className="flex items-start gap-3 rounded-lg border border-paper-edge bg-white/80 px-4 py-3 text-sm shadow-sm"
                data-testid="import-clear-empty"
              >
                <input
                  type="checkbox"
                  className="mt-0.5 h-4 w-4 accent-shellac"
                  checked={clearEmpty}
                  disabled={phase !== "idle"}
                  onChange={(e) => {
                    setClearEmpty(e.target.checked);
                    if (file) void preview(file, defaultAccession, e.target.checked);
                  }}
                />
                <span>
                  <span className="font-medium text-ink">Clear fields left empty</span>
                  <span className="block text-ink-soft">
                    When ticked, an empty cell in a row that updates a disc clears that field. When not, an
                    empty cell leaves the field as it is. The accession and the required columns are never
                    cleared.
                  </span>
                </span>
              </label>
            ) : null}

            <ImportErrors report={report} />
            <ImportConflicts report={report} />
            <ImportUpdates report={report} />
            <ImportAdds report={report} />

            <div className="flex flex-wrap items-center justify-between gap-4 rounded-xl border border-paper-edge bg-white/80 px-5 py-4 shadow-sm">
              <p className="max-w-xl text-sm text-ink-soft">
                {report.errorCount > 0 || report.conflictCount > 0
                  ? "Importing is possible once every problem and conflict above is resolved."
                  : `All of it goes in as one change: if anything fails, nothing is written. Each changed disc gets its own entry in its history.`}
              </p>
              <Button
                onClick={() => void commit()}
                disabled={blocked || phase !== "idle"}
                data-testid="import-confirm"
              >
                {phase === "importing" ? "Importing…" : confirmLabel(report)}
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

function doneTitle(done: ImportDone): string {
  const added = `${plural(done.imported, "disc")} with ${plural(done.sides, "side")}`;
  if (done.updated === 0) return `Imported ${added}`;
  if (done.imported === 0) return `Updated ${plural(done.updated, "disc")}`;
  return `Imported ${added} and updated ${plural(done.updated, "disc")}`;
}

function confirmLabel(report: ImportReport): string {
  if (report.updates === 0) return `Import ${plural(report.discs, "disc")}`;
  if (report.discs === 0) return `Update ${plural(report.updates, "disc")}`;
  return `Add ${plural(report.discs, "disc")}, update ${plural(report.updates, "disc")}`;
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
