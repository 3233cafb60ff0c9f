import "server-only";
import { createHash } from "node:crypto";
import { sql } from "kysely";
import type { NextRequest } from "next/server";
import { z } from "zod";
import { db } from "../../db";
import type { SessionUser } from "../auth/session-user";
import { AppError } from "../http/errors";
import { appendEvent } from "../provenance";
import { blankToUndefined, discListQuerySchema } from "../validation/catalogue";
import {
  type BuiltSheet,
  buildDiscs,
  CsvFormatError,
  decodeCsv,
  type DiscSummary,
  type ExportDisc,
  type ImportError,
  maxListedErrors,
  readCatalogueCsv,
  summariseDisc,
  toCatalogueCsv,
} from "./csv-format";
import { insertDiscs } from "./discs";
import { listDiscIds } from "./list-query";
import { readDiscs } from "./records";

/** Uploads larger than this are refused before they are read (20 000 rows of long notes fit well below). */
export const maxUploadBytes = 40 * 1024 * 1024;
/** Discs listed in a preview; the counts cover the whole file. */
export const previewDiscLimit = 200;

const importOptionsSchema = z.object({
  fileName: z.preprocess(
    blankToUndefined,
    z.string().trim().max(255, "The file name is too long.").default("catalogue.csv"),
  ),
  defaultAccession: z.preprocess(
    blankToUndefined,
    z.uuid({ error: "The accession for rows without one is not a valid id." }).optional(),
  ),
});

const commitOptionsSchema = importOptionsSchema.extend({
  confirm: z.enum(["true", "1", "yes", "on"], { error: "Send confirm=true to import the file." }),
  sha256: z
    .string({ error: "Send the sha256 the preview gave for this file." })
    .trim()
    .toLowerCase()
    .regex(/^[0-9a-f]{64}$/, "sha256 must be the 64 hex digits the preview gave."),
});

export interface Upload {
  bytes: Uint8Array;
  fields: Record<string, string>;
}

/**
 * Reads an import request: multipart form-data with the CSV in the field `file` (other
 * fields alongside it), or the CSV itself as a text/csv body with the other fields in
 * the query string.
 */
/** The bodies readUpload takes: route() refuses any other (lib/http/route.ts). */
export const uploadMediaTypes = ["multipart/form-data", "text/csv", "text/plain", "application/csv"] as const;

export async function readUpload(req: NextRequest): Promise<Upload> {
  const type = (req.headers.get("content-type") ?? "").toLowerCase();
  const declared = Number(req.headers.get("content-length") ?? 0);
  if (declared > maxUploadBytes) throw tooLarge();
  const query = Object.fromEntries(req.nextUrl.searchParams);
  if (type.startsWith("multipart/form-data")) {
    const form = await req.formData().catch(() => {
      throw new AppError("invalid", 422, "The upload could not be read as form data.", {
        file: ["Unreadable form data."],
      });
    });
    const file = form.get("file");
    if (!file || typeof file === "string")
      throw new AppError("invalid", 422, "Attach the CSV file in the field “file”.", {
        file: ["No file attached."],
      });
    if (file.size > maxUploadBytes) throw tooLarge();
    const fields: Record<string, string> = { ...query, fileName: file.name };
    for (const [k, v] of form.entries()) if (typeof v === "string") fields[k] = v;
    return { bytes: new Uint8Array(await file.arrayBuffer()), fields };
  }
  if (type.startsWith("text/csv") || type.startsWith("text/plain") || type.startsWith("application/csv")) {
    const bytes = new Uint8Array(await req.arrayBuffer());
    if (bytes.byteLength > maxUploadBytes) throw tooLarge();
    return { bytes, fields: query };
  }
  throw new AppError(
    "invalid",
    415,
    "Send the CSV as multipart form-data (field “file”) or as a text/csv body.",
    { file: ["No CSV in the request."] },
  );
}

function tooLarge(): AppError {
  return new AppError(
    "invalid",
    413,
    `The file is larger than ${maxUploadBytes / 1024 / 1024} MB. Split it into several files.`,
    { file: ["Too large."] },
  );
}

export interface ExistingDuplicate {
  row: number;
  shelfMark: string;
  existingDiscId?: string;
  /** For a shelf mark repeated within the file: the row where it first appears. */
  firstRow?: number;
}

export interface ImportReport {
  sha256: string;
  fileName: string;
  /** Rows of data in the file. */
  rows: number;
  discs: number;
  sides: number;
  toAdd: DiscSummary[];
  errors: ImportError[];
  errorCount: number;
  duplicates: ExistingDuplicate[];
}

interface Checked {
  report: ImportReport;
  sheet: BuiltSheet;
}

/** Parses and checks a file against the catalogue as it stands: nothing is written. */
async function check(
  upload: Upload,
  defaultAccession: string | undefined,
  fileName: string,
): Promise<Checked> {
  const sha256 = createHash("sha256").update(upload.bytes).digest("hex");
  let text: string;
  try {
    text = decodeCsv(upload.bytes);
  } catch (e) {
    if (e instanceof CsvFormatError) throw new AppError("invalid", 422, e.message, { file: [e.message] });
    throw e;
  }
  const read = readCatalogueCsv(text);

  // Accessions: the ones the file names, by identifier, and the default one.
  const identifiers = [
    ...new Set(read.rows.map((r) => r.values.accession.trim().toLowerCase()).filter(Boolean)),
  ];
  const known = new Map<string, { id: string; identifier: string }>();
  if (identifiers.length) {
    const found = await db
      .selectFrom("accessions")
      .select(["id", "identifier"])
      .where(sql<boolean>`lower(identifier) = ANY(${identifiers}::text[])`)
      .execute();
    for (const a of found) known.set(a.identifier.toLowerCase(), a);
  }
  let defaultIdentifier = "";
  if (defaultAccession) {
    const a = await db
      .selectFrom("accessions")
      .select(["id", "identifier"])
      .where("id", "=", defaultAccession)
      .executeTakeFirst();
    if (!a)
      throw new AppError("invalid", 422, "The accession chosen for rows without one does not exist.", {
        defaultAccession: ["Unknown accession."],
      });
    defaultIdentifier = a.identifier;
  }
  const sheet = buildDiscs(read.rows, {
    resolveAccession: (i) => known.get(i.toLowerCase())?.id,
    defaultAccessionId: defaultAccession,
  });
  const errors = [...read.errors, ...sheet.errors];

  // Shelf marks already in the catalogue (the unique index is on lower(shelf_mark)).
  const duplicates: ExistingDuplicate[] = sheet.duplicates.map((d) => ({
    row: d.row,
    shelfMark: d.shelfMark,
    firstRow: d.firstRow,
  }));
  const taken = new Map<string, string>();
  const marks = [...new Set(sheet.discs.map((d) => d.disc.shelfMark.toLowerCase()))];
  if (marks.length) {
    for (let i = 0; i < marks.length; i += 5000) {
      const chunk = marks.slice(i, i + 5000);
      const rows = await db
        .selectFrom("discs")
        .select(["id", "shelf_mark"])
        .where(sql<boolean>`lower(shelf_mark) = ANY(${chunk}::text[])`)
        .execute();
      for (const r of rows) taken.set(r.shelf_mark.toLowerCase(), r.id);
    }
    for (const d of sheet.discs) {
      const id = taken.get(d.disc.shelfMark.toLowerCase());
      if (!id) continue;
      duplicates.push({ row: d.row, shelfMark: d.disc.shelfMark, existingDiscId: id });
      errors.push({
        row: d.row,
        column: "shelf_mark",
        message: `Shelf mark ${d.disc.shelfMark} is already in the catalogue.`,
      });
    }
  }
  // Discs whose shelf mark is taken are not to add (they are errors above).
  const addable = sheet.discs.filter((d) => !taken.has(d.disc.shelfMark.toLowerCase()));
  if (read.errors.length === 0 && sheet.discs.length === 0 && errors.length === 0) {
    errors.push({ row: 2, column: "", message: "The file has no discs to import." });
  }
  errors.sort((a, b) => a.row - b.row);
  duplicates.sort((a, b) => a.row - b.row);

  const identifierOf = (d: (typeof sheet.discs)[number]) =>
    d.accessionIdentifier || (d.disc.accessionId === defaultAccession ? defaultIdentifier : "");
  return {
    sheet,
    report: {
      sha256,
      fileName,
      rows: sheet.rowCount,
      discs: addable.length,
      sides: addable.reduce((n, d) => n + d.disc.sides.length, 0),
      toAdd: addable.slice(0, previewDiscLimit).map((d) => summariseDisc(d, identifierOf(d))),
      errors: errors.slice(0, maxListedErrors),
      errorCount: errors.length,
      duplicates,
    },
  };
}

export async function previewImport(upload: Upload): Promise<ImportReport> {
  const options = importOptionsSchema.parse(upload.fields);
  return (await check(upload, options.defaultAccession, options.fileName)).report;
}

export type CommitResult =
  | { ok: true; imported: number; sides: number; rows: number; sha256: string; eventId: string }
  | { ok: false; report: ImportReport };

/**
 * Checks the file again (the catalogue may have changed since the preview) and, when
 * it is clean, inserts every disc and the import's own event in one transaction: all
 * of them or none.
 */
export async function commitImport(actor: SessionUser, upload: Upload): Promise<CommitResult> {
  const options = commitOptionsSchema.parse(upload.fields);
  const { report, sheet } = await check(upload, options.defaultAccession, options.fileName);
  if (report.sha256 !== options.sha256) {
    throw new AppError(
      "conflict",
      409,
      "This is not the file that was previewed (its SHA-256 differs). Preview it again before importing.",
      { sha256: ["Does not match the file."] },
    );
  }
  if (report.errorCount > 0) return { ok: false, report };
  try {
    const eventId = await db.transaction().execute(async (trx) => {
      await insertDiscs(
        trx,
        actor,
        sheet.discs.map((d) => ({ disc: d.disc, origin: { importSha256: report.sha256, row: d.row } })),
      );
      const event = await appendEvent(trx, {
        actorId: actor.id,
        kind: "import.committed",
        subjectType: "import",
        subjectId: report.sha256,
        payload: {
          sha256: report.sha256,
          fileName: report.fileName,
          rows: report.rows,
          discs: report.discs,
          sides: report.sides,
        },
      });
      return event.id;
    });
    return {
      ok: true,
      imported: report.discs,
      sides: report.sides,
      rows: report.rows,
      sha256: report.sha256,
      eventId,
    };
  } catch (e) {
    // Someone added one of these shelf marks between the check and the insert.
    if ((e as { code?: string }).code === "23505") {
      throw new AppError(
        "conflict",
        409,
        "A shelf mark in the file was added to the catalogue while it was being imported. Nothing was written; preview the file again.",
      );
    }
    throw e;
  }
}

// ---------------------------------------------------------------------------------
// Export

const exportQuerySchema = discListQuerySchema.omit({ page: true, pageSize: true });

/** Every disc of the catalogue view the query describes, as catalogue CSV. */
export async function exportCatalogueCsv(input: unknown): Promise<string> {
  const q = exportQuerySchema.parse(input);
  // The catalogue page's own filters and order, so the file holds exactly the view.
  const ids = await listDiscIds(db, q);
  const discs: ExportDisc[] = [];
  // Deleted since it was listed: left out.
  for (let i = 0; i < ids.length; i += 1000) discs.push(...(await readDiscs(db, ids.slice(i, i + 1000))));
  return toCatalogueCsv(discs);
}

export function exportFileName(now = new Date()): string {
  return `rillbook-catalogue-${now.toISOString().slice(0, 10)}.csv`;
}
