import "server-only";
import { createHash } from "node:crypto";
import { sql } from "kysely";
import { z } from "zod";
import { db } from "../../db";
import type { SessionUser } from "../auth/session-user";
import { appendEvent } from "../provenance";
import {
  blankToUndefined,
  type DiscEdit,
  discListQuerySchema,
  maxSidesPerDisc,
  toStoredSide,
} from "../validation/catalogue";
import {
  type BuiltDisc,
  buildDiscs,
  decodeCsv,
  type DiscChanges,
  discChanges,
  type DiscSummary,
  delimiters,
  type ExportDisc,
  hasChanges,
  type ImportError,
  maxListedErrors,
  readCatalogueCsv,
  checkedVersions,
  setAsideAsExported,
  setAsideUnchanged,
  summariseDisc,
  toCatalogueCsv,
} from "./csv-format";
import { insertDiscs, writeDiscEdit } from "./discs";
import { listDiscIds } from "./list-query";
import {
  type DiscFieldsRecord,
  type DiscRecord,
  readDiscFieldsByShelfMarks,
  readDiscFieldsUnlessAtVersion,
  readDiscs,
} from "./records";

// The catalogue's spreadsheet import and export against the database. The file's format
// is lib/catalogue/csv-format.ts (pure); reading the request and answering over HTTP is
// lib/http/catalogue-import.ts. This module takes plain bytes and fields and throws
// CsvFormatError (a file it cannot read) or ImportRefused.

/** Uploads larger than this are refused before they are read (20 000 rows of long notes fit well below). */
export const maxUploadBytes = 40 * 1024 * 1024;
/** Discs listed in a preview (to add, to update, in conflict); the counts cover the whole file. */
export const previewDiscLimit = 200;

const truthy = z.preprocess(
  (v) => (typeof v === "string" ? ["true", "1", "yes", "on"].includes(v.trim().toLowerCase()) : v),
  z.boolean().default(false),
);

const importOptionsSchema = z.object({
  fileName: z.preprocess(
    blankToUndefined,
    z.string().trim().max(255, "The file name is too long.").default("catalogue.csv"),
  ),
  defaultAccession: z.preprocess(
    blankToUndefined,
    z.uuid({ error: "The accession for rows without one is not a valid id." }).optional(),
  ),
  /** Empty cells of an update clear their field; by default they leave it as it is. */
  clearEmpty: truthy,
});
type ImportOptions = z.infer<typeof importOptionsSchema>;

const commitOptionsSchema = importOptionsSchema.extend({
  confirm: z.enum(["true", "1", "yes", "on"], { error: "Send confirm=true to import the file." }),
  sha256: z
    .string({ error: "Send the sha256 the preview gave for this file." })
    .trim()
    .toLowerCase()
    .regex(/^[0-9a-f]{64}$/, "sha256 must be the 64 hex digits the preview gave."),
});

/** An upload as the HTTP edge read it: the file's bytes and the fields sent with it. */
export interface Upload {
  bytes: Uint8Array;
  fields: Record<string, string>;
}

/** Why an import was not done; lib/http/catalogue-import.ts answers each over HTTP. */
export class ImportRefused extends Error {
  constructor(
    readonly reason: "unknown_accession" | "not_previewed" | "has_problems" | "changed_meanwhile",
    message: string,
    /** For "has_problems": the file checked again, with what is wrong now. */
    readonly report?: ImportReport,
  ) {
    super(message);
    this.name = "ImportRefused";
  }
}

export interface ExistingDuplicate {
  row: number;
  shelfMark: string;
  existingDiscId?: string;
  /** For a shelf mark repeated within the file: the row where it first appears. */
  firstRow?: number;
}

/** A catalogued disc the file changes, with each change (before → after). */
export interface DiscUpdate {
  row: number;
  discId: string;
  shelfMark: string;
  version: number;
  changes: DiscChanges;
}

/** Someone saved the disc after the file was exported: who, when and which fields. */
export interface DiscConflict {
  row: number;
  discId: string;
  shelfMark: string;
  exportedVersion: number;
  currentVersion: number;
  /** The saves since the export, latest first (up to ten). */
  edits: { by: string | null; at: string; changed: string[] }[];
}

export interface ImportReport {
  sha256: string;
  fileName: string;
  /** How the file's cells are separated ("commas", "semicolons" or "tabs"). */
  separatedBy: string;
  /** Whether an update's empty cells clear their field. */
  clearEmpty: boolean;
  /** Rows of data in the file. */
  rows: number;
  /** Discs to add, and their sides. */
  discs: number;
  sides: number;
  toAdd: DiscSummary[];
  /** Catalogued discs the file changes. */
  updates: number;
  toUpdate: DiscUpdate[];
  /** Catalogued discs the file holds as they are. */
  unchanged: number;
  conflicts: DiscConflict[];
  conflictCount: number;
  errors: ImportError[];
  errorCount: number;
  duplicates: ExistingDuplicate[];
}

interface Plan {
  adds: BuiltDisc[];
  updates: { built: BuiltDisc; discId: string }[];
}

interface Checked {
  report: ImportReport;
  plan: Plan;
}

/**
 * Parses and checks a file against the catalogue as it stands: nothing is written.
 * Set-based: one query per table for the whole file (accessions, the discs its shelf
 * marks name, their sides, and the saves behind any conflict), never one per row.
 */
async function check(upload: Upload, options: ImportOptions): Promise<Checked> {
  const { defaultAccession, fileName, clearEmpty } = options;
  const read = readCatalogueCsv(decodeCsv(upload.bytes));

  // The discs the file's shelf marks name (the unique index is on lower(shelf_mark)), asked
  // for as soon as the rows are read: the file's hash is worked out and the accessions are
  // looked up while the database reads them. In an export brought back, a disc whose rows
  // still match the check the export wrote is only asked whether it is still at the version
  // they carry (then it changed nothing); the rest are read, and compared field by field.
  const versions = checkedVersions(read.rows, read.columns);
  const reading = versions
    ? readDiscFieldsUnlessAtVersion(db, versions)
    : readDiscFieldsByShelfMarks(
        db,
        read.rows.flatMap((r) => (r.key ? [r.key] : [])),
      ).then((records) => ({ atVersion: new Set<string>(), records }));
  // Settled either way, so a refusal below never leaves it unhandled.
  reading.catch(() => undefined);
  const sha256 = createHash("sha256").update(upload.bytes).digest("hex");

  // Accessions: the ones the file names, by identifier, and the default one.
  const identifiers = read.accessions;
  const known = new Map<string, { id: string; identifier: string }>();
  let defaultIdentifier = "";
  if (identifiers.length || defaultAccession) {
    const found = await db
      .selectFrom("accessions")
      .select(["id", "identifier"])
      .where((eb) =>
        eb.or([
          eb(sql<string>`lower(identifier)`, "=", sql<string>`ANY(${identifiers}::text[])`),
          ...(defaultAccession ? [eb("id", "=", defaultAccession)] : []),
        ]),
      )
      .execute();
    for (const a of found) {
      known.set(a.identifier.toLowerCase(), a);
      if (a.id === defaultAccession) defaultIdentifier = a.identifier;
    }
  }
  if (defaultAccession && !defaultIdentifier)
    throw new ImportRefused("unknown_accession", "The accession chosen for rows without one does not exist.");
  const identifierOfId = new Map([...known.values()].map((a) => [a.id, a.identifier]));

  // A disc brought back as exported changes nothing: it is counted, not checked again.
  // A stored disc's record reads as the rows an export of it writes (its ids aside).
  const { atVersion, records } = await reading;
  const asText = setAsideAsExported(read.rows, atVersion);
  // The rows set aside are done with: let them go before the rest is checked.
  read.rows = [];
  const byMark = new Map(records.map((d) => [d.shelfMark.toLowerCase(), d]));
  const asFields = setAsideUnchanged(asText.rows, (key) => byMark.get(key), read.columns);
  const asExported = {
    rows: asFields.rows,
    discs: asText.discs + asFields.discs,
    rowCount: asText.rowCount + asFields.rowCount,
  };
  const sheet = buildDiscs(asExported.rows, {
    resolveAccession: (i) => known.get(i.toLowerCase())?.id,
    defaultAccessionId: defaultAccession,
    existing: (key) => byMark.get(key),
    clearEmpty,
    columns: read.columns,
  });
  const errors = [...read.errors, ...sheet.errors];
  const duplicates: ExistingDuplicate[] = sheet.duplicates.map((d) => ({
    row: d.row,
    shelfMark: d.shelfMark,
    firstRow: d.firstRow,
  }));

  const plan: Plan = { adds: [], updates: [] };
  const toUpdate: DiscUpdate[] = [];
  const stale: { built: BuiltDisc; record: DiscFieldsRecord }[] = [];
  let unchanged = asExported.discs;
  for (const d of sheet.discs) {
    const record = byMark.get(d.disc.shelfMark.toLowerCase());
    if (!record) {
      if (d.version !== null)
        errors.push({
          row: d.row,
          column: "version",
          message:
            `No disc in the catalogue has the shelf mark ${d.disc.shelfMark}, yet the row carries version ` +
            `${d.version}. Was its shelf mark changed, or the disc deleted? To add it as a new disc, empty the version cell.`,
        });
      else plan.adds.push(d);
      continue;
    }
    if (d.version === null) {
      duplicates.push({ row: d.row, shelfMark: d.disc.shelfMark, existingDiscId: record.id });
      errors.push({
        row: d.row,
        column: "shelf_mark",
        message:
          `Shelf mark ${d.disc.shelfMark} is already in the catalogue. To update that disc, give the version ` +
          "it was exported at (export it to get the file with its version); to add another disc, give it its own shelf mark.",
      });
      continue;
    }
    if (d.version !== record.version) {
      stale.push({ built: d, record });
      continue;
    }
    const sideCount = new Set([
      ...record.sides.map((s) => s.designation.toLowerCase()),
      ...d.disc.sides.map((s) => s.designation.toLowerCase()),
    ]).size;
    if (sideCount > maxSidesPerDisc) {
      errors.push({
        row: d.row,
        column: "side",
        message: `Disc ${d.disc.shelfMark} would have ${sideCount} sides with the ones this file adds; a disc has at most ${maxSidesPerDisc}.`,
      });
      continue;
    }
    const changes = discChanges(record, d.disc);
    if (!hasChanges(changes)) {
      unchanged++;
      continue;
    }
    plan.updates.push({ built: d, discId: record.id });
    toUpdate.push({
      row: d.row,
      discId: record.id,
      shelfMark: record.shelfMark,
      version: record.version,
      changes,
    });
  }
  const conflicts = await conflictsOf(stale);

  if (read.errors.length === 0 && sheet.discs.length === 0 && unchanged === 0 && errors.length === 0) {
    errors.push({ row: 2, column: "", message: "The file has no discs to import." });
  }
  errors.sort((a, b) => a.row - b.row);
  duplicates.sort((a, b) => a.row - b.row);

  const identifierOf = (d: BuiltDisc) =>
    d.accessionIdentifier || identifierOfId.get(d.disc.accessionId) || defaultIdentifier;
  return {
    plan,
    report: {
      sha256,
      fileName,
      separatedBy: delimiters[read.delimiter],
      clearEmpty,
      rows: sheet.rowCount + asExported.rowCount,
      discs: plan.adds.length,
      sides: plan.adds.reduce((n, d) => n + d.disc.sides.length, 0),
      toAdd: plan.adds.slice(0, previewDiscLimit).map((d) => summariseDisc(d, identifierOf(d))),
      updates: toUpdate.length,
      toUpdate: toUpdate.slice(0, previewDiscLimit).map((u) => withAccessionNames(u, identifierOfId)),
      unchanged,
      conflicts: conflicts.slice(0, previewDiscLimit),
      conflictCount: conflicts.length,
      errors: errors.slice(0, maxListedErrors),
      errorCount: errors.length,
      duplicates,
    },
  };
}

/** An accession change reads as identifiers, not ids (the accessions the file names are at hand). */
function withAccessionNames(u: DiscUpdate, identifierOfId: Map<string, string>): DiscUpdate {
  const fields = u.changes.fields.map((c) =>
    c.field === "accessionId"
      ? {
          ...c,
          before: identifierOfId.get(String(c.before)) ?? c.before,
          after: identifierOfId.get(String(c.after)) ?? c.after,
        }
      : c,
  );
  return { ...u, changes: { ...u.changes, fields } };
}

/** The saves behind each stale row, in one query for all of them. */
async function conflictsOf(stale: { built: BuiltDisc; record: DiscFieldsRecord }[]): Promise<DiscConflict[]> {
  if (!stale.length) return [];
  const ids = stale.map((s) => s.record.id);
  const rows = await sql<{ discId: string; at: Date; by: string | null; changed: unknown }>`
    SELECT disc_id AS "discId", at, by, changed FROM (
      SELECT e.disc_id, e.at, u.name AS by, e.payload->'changed' AS changed,
             row_number() OVER (PARTITION BY e.disc_id ORDER BY e.seq DESC) AS n
      FROM provenance_events e LEFT JOIN users u ON u.id = e.actor_id
      WHERE e.disc_id = ANY(${ids}::uuid[]) AND e.kind = 'disc.edited'
    ) t WHERE n <= 10 ORDER BY "discId", at DESC`.execute(db);
  const edits = new Map<string, DiscConflict["edits"]>();
  for (const r of rows.rows) {
    const list = edits.get(r.discId) ?? [];
    list.push({
      by: r.by,
      at: r.at.toISOString(),
      changed: Array.isArray(r.changed) ? r.changed.map(String) : [],
    });
    edits.set(r.discId, list);
  }
  return stale.map(({ built, record }) => ({
    row: built.row,
    discId: record.id,
    shelfMark: record.shelfMark,
    exportedVersion: built.version ?? 0,
    currentVersion: record.version,
    edits: (edits.get(record.id) ?? []).slice(0, Math.max(1, record.version - (built.version ?? 0))),
  }));
}

export async function previewImport(upload: Upload): Promise<ImportReport> {
  return (await check(upload, importOptionsSchema.parse(upload.fields))).report;
}

export interface ImportDone {
  imported: number;
  sides: number;
  updated: number;
  rows: number;
  sha256: string;
  eventId: string;
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/**
 * An update as the form's save takes it: the file's disc fields over the stored disc,
 * its sides matched by designation (a side the file leaves out stays as it is).
 */
function editFrom(before: DiscRecord, built: BuiltDisc): DiscEdit {
  const inFile = new Map(built.disc.sides.map((s) => [s.designation.toLowerCase(), s]));
  const stored = new Set(before.sides.map((s) => s.designation.toLowerCase()));
  return {
    ...built.disc,
    version: before.version,
    sides: [
      ...before.sides.map((s) => ({
        ...(inFile.get(s.designation.toLowerCase()) ?? toStoredSide(s)),
        id: s.id,
      })),
      ...built.disc.sides.filter((s) => !stored.has(s.designation.toLowerCase())),
    ],
  };
}

/**
 * Checks the file again (the catalogue may have changed since the preview) and, when it
 * is clean, adds its new discs and saves its changes to catalogued ones, each with its
 * own event, and the import's event, in one transaction: all of it or none.
 */
export async function commitImport(actor: SessionUser, upload: Upload): Promise<ImportDone> {
  const options = commitOptionsSchema.parse(upload.fields);
  const { report, plan } = await check(upload, options);
  if (report.sha256 !== options.sha256)
    throw new ImportRefused(
      "not_previewed",
      "This is not the file that was previewed (its SHA-256 differs). Preview it again before importing.",
    );
  if (report.errorCount > 0 || report.conflictCount > 0) {
    const what = [
      report.errorCount ? `${plural(report.errorCount, "problem")} to fix` : "",
      report.conflictCount
        ? `${plural(report.conflictCount, "disc")} changed in Rillbook since the export`
        : "",
    ].filter(Boolean);
    throw new ImportRefused(
      "has_problems",
      `Nothing was imported: the file has ${what.join(" and ")}.`,
      report,
    );
  }
  const changedMeanwhile = () =>
    new ImportRefused(
      "changed_meanwhile",
      "A disc in the file was changed or added in the catalogue while it was being imported. Nothing was written; preview the file again.",
    );
  try {
    const eventId = await db.transaction().execute(async (trx) => {
      // The discs to update, locked, at the versions the preview saw; read again inside the transaction.
      const ids = plan.updates.map((u) => u.discId);
      const befores = ids.length ? await lockAndRead(trx, ids) : new Map<string, DiscRecord>();
      for (const u of plan.updates)
        if (befores.get(u.discId)?.version !== u.built.version) throw changedMeanwhile();
      await insertDiscs(
        trx,
        actor,
        plan.adds.map((d) => ({ disc: d.disc, origin: { importSha256: report.sha256, row: d.row } })),
      );
      for (const u of plan.updates) {
        const before = befores.get(u.discId)!;
        await writeDiscEdit(trx, actor, before, editFrom(before, u.built), {
          importSha256: report.sha256,
          row: u.built.row,
        });
      }
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
          updated: report.updates,
        },
      });
      return event.id;
    });
    return {
      imported: report.discs,
      sides: report.sides,
      updated: report.updates,
      rows: report.rows,
      sha256: report.sha256,
      eventId,
    };
  } catch (e) {
    // Someone added one of these shelf marks between the check and the insert.
    if ((e as { code?: string }).code === "23505") throw changedMeanwhile();
    throw e;
  }
}

async function lockAndRead(
  trx: Parameters<typeof readDiscs>[0],
  ids: string[],
): Promise<Map<string, DiscRecord>> {
  await trx
    .selectFrom("discs")
    .select("id")
    .where(sql<boolean>`id = ANY(${ids}::uuid[])`)
    .orderBy("id")
    .forUpdate()
    .execute();
  return new Map((await readDiscs(trx, ids)).map((d) => [d.id, d]));
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
