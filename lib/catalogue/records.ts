import { sql, type Kysely, type Transaction } from "kysely";
import type { Database, SideStatus } from "../../db/types";
import type { StoredDisc, StoredSide } from "../validation/catalogue";

type Db = Kysely<Database> | Transaction<Database>;

/** A side as the catalogue reads it: its stored fields (the one shape) and where it stands in the workflow. */
export type SideRecord = StoredSide & {
  id: string;
  status: SideStatus;
  assignedEngineerId: string | null;
  assignedEngineerName: string | null;
  returnReason: string | null;
  /** What the side stands on now: its current flat transfer, curve choice and access copy. */
  currentTransferId: string | null;
  currentCurveChoiceId: string | null;
  currentRenderId: string | null;
  version: number;
};

/** A disc as the catalogue reads it: its stored fields (the one shape), with the record's own bookkeeping. */
export type DiscRecord = StoredDisc & {
  id: string;
  accessionIdentifier: string;
  version: number;
  createdAt: Date;
  updatedAt: Date;
  sides: SideRecord[];
};

/** Reads one disc with its sides, explicitly selected; null when there is none. */
export async function readDisc(db: Db, id: string): Promise<DiscRecord | null> {
  if (!/^[0-9a-f-]{36}$/i.test(id)) return null;
  const [disc] = await readDiscs(db, [id]);
  return disc ?? null;
}

/** Reads many discs with their sides in two queries, in the order of `ids` (missing ones left out). */
export async function readDiscs(db: Db, ids: string[]): Promise<DiscRecord[]> {
  if (!ids.length) return [];
  const rows = await selectDiscs(db).where("d.id", "in", ids).execute();
  const found = await withSides(db, rows);
  const byId = new Map(found.map((d) => [d.id, d]));
  return ids.flatMap((id) => byId.get(id) ?? []);
}

/** A disc's catalogue fields and what names it, without its workflow: what an import compares. */
export type DiscFieldsRecord = StoredDisc & {
  id: string;
  accessionIdentifier: string;
  version: number;
  sides: (StoredSide & { id: string })[];
};

/**
 * The catalogue fields of the discs with these shelf marks (any case), with their sides',
 * in one query whatever the number of marks (the unique index on lower(shelf_mark) finds
 * the discs, the sides' index on disc_id their sides, which come as one JSON list per
 * disc). They read only the fields a spreadsheet holds: an import of thousands of rows
 * does not wait for the workflow's.
 */
export async function readDiscFieldsByShelfMarks(db: Db, shelfMarks: string[]): Promise<DiscFieldsRecord[]> {
  const marks = [...new Set(shelfMarks.map((m) => m.toLowerCase()))];
  if (!marks.length) return [];
  const discs = await selectDiscFields(db)
    .select(
      sql<DiscFieldsRecord["sides"]>`(
        SELECT coalesce(json_agg(json_build_object(
                 'id', s.id, 'designation', s.designation, 'matrixNumber', s.matrix_number, 'take', s.take,
                 'title', s.title, 'performers', s.performers, 'notes', s.notes) ORDER BY lower(s.designation)), '[]'::json)
        FROM sides s WHERE s.disc_id = d.id)`.as("sides"),
    )
    .where(sql<boolean>`lower(d.shelf_mark) = ANY(${marks}::text[])`)
    .execute();
  const out: DiscFieldsRecord[] = [];
  for (const d of discs) {
    const record = d as unknown as DiscFieldsRecord;
    setNumbers(record, d);
    out.push(record);
  }
  return out;
}

/**
 * A catalogued disc's cells as the export writes them (lib/catalogue/csv-format.ts's
 * `exportedCell`), put together by the database: what an import compares a disc brought
 * back unchanged with, without reading the disc's fields one by one.
 */
export interface ExportedCells {
  /** The disc's own columns, shelf_mark to handling_notes, separated by \x1f. */
  disc: string;
  /** Its sides' columns, side to side_notes, separated by \x1f, one side after another separated by \x1e; null without sides. */
  sides: string | null;
  sideCount: number;
  version: string;
}

/** Text as the export writes it: a number without trailing zeros, a list joined by ";", nothing for null. */
const exportedDiscCells = sql<string>`concat_ws(E'\x1f',
    d.shelf_mark, a.identifier, d.label_name, d.catalogue_number, d.format, coalesce(d.base, ''),
    coalesce(trim_scale(d.diameter_in)::text, ''), trim_scale(d.nominal_speed_rpm)::text, d.groove, d.cut,
    coalesce(d.recording_date::text, ''), coalesce(d.recorded_from_year::text, ''), coalesce(d.recorded_to_year::text, ''),
    d.condition_grade, array_to_string(d.condition_flags, ';', ''), d.condition_notes, d.handling_notes)`;

/**
 * The export's cells of the discs with these shelf marks (in lower case), by shelf mark in
 * lower case: one row and four values per disc whatever its number of sides. A long list
 * is read in two halves at once, on two connections: the server works on both together.
 */
export async function readExportedCellsByShelfMarks(
  db: Db,
  shelfMarkKeys: string[],
): Promise<Map<string, ExportedCells>> {
  const marks = [...new Set(shelfMarkKeys)];
  const half = marks.length >= 2 * exportedCellsChunk ? Math.ceil(marks.length / 2) : marks.length;
  const parts = await Promise.all(
    [marks.slice(0, half), marks.slice(half)].filter((m) => m.length).map((m) => exportedCellsOf(db, m)),
  );
  const out = new Map<string, ExportedCells>();
  // Keyed as the import keys the other reading (readDiscFieldsByShelfMarks) by shelf mark.
  for (const rows of parts) for (const r of rows) out.set(r.shelfMark.toLowerCase(), r);
  return out;
}

/** The fewest shelf marks read in each half: fewer are read in one query. */
const exportedCellsChunk = 250;

async function exportedCellsOf(db: Db, marks: string[]) {
  const rows = await sql<ExportedCells & { shelfMark: string }>`
    SELECT d.shelf_mark AS "shelfMark", ${exportedDiscCells} AS disc, d.version::text AS version,
           s.sides, coalesce(s.n, 0)::int AS "sideCount"
    FROM discs d
    JOIN accessions a ON a.id = d.accession_id
    LEFT JOIN LATERAL (
      SELECT string_agg(concat_ws(E'\x1f', s.designation, s.matrix_number, s.take, s.title, s.performers, s.notes),
                        E'\x1e' ORDER BY lower(s.designation)) AS sides,
             count(*) AS n
      FROM sides s WHERE s.disc_id = d.id
    ) s ON true
    WHERE lower(d.shelf_mark) = ANY(${marks}::text[])`.execute(db);
  return rows.rows;
}

/** A side's catalogue fields, and the disc it is on: what every reading of sides selects. */
const sideFieldColumns = [
  "s.id",
  "s.disc_id as discId",
  "s.designation",
  "s.matrix_number as matrixNumber",
  "s.take",
  "s.title",
  "s.performers",
  "s.notes",
] as const;

/** Rows of sides, in order, gathered by their disc. */
function byDisc<T extends { discId: string }>(rows: T[]): Map<string, Omit<T, "discId">[]> {
  const out = new Map<string, Omit<T, "discId">[]>();
  for (const { discId, ...side } of rows) {
    const list = out.get(discId);
    if (list) list.push(side);
    else out.set(discId, [side]);
  }
  return out;
}

/** withNumbers in place, for a row read only to be turned into its record. */
function setNumbers(
  record: { diameterIn: number | null; nominalSpeedRpm: number },
  row: { diameterIn: string | number | null; nominalSpeedRpm: string | number },
): void {
  record.diameterIn = row.diameterIn === null ? null : Number(row.diameterIn);
  record.nominalSpeedRpm = Number(row.nominalSpeedRpm);
}

/** pg reads numeric columns as text: the diameter and the speed as numbers. */
function withNumbers<T extends { diameterIn: string | number | null; nominalSpeedRpm: string | number }>(
  d: T,
) {
  return {
    ...d,
    diameterIn: d.diameterIn === null ? null : Number(d.diameterIn),
    nominalSpeedRpm: Number(d.nominalSpeedRpm),
  };
}

function selectDiscFields(db: Db) {
  return db
    .selectFrom("discs as d")
    .innerJoin("accessions as a", "a.id", "d.accession_id")
    .select([
      "d.id",
      "d.accession_id as accessionId",
      "a.identifier as accessionIdentifier",
      "d.shelf_mark as shelfMark",
      "d.label_name as labelName",
      "d.catalogue_number as catalogueNumber",
      "d.format",
      "d.base",
      "d.diameter_in as diameterIn",
      "d.nominal_speed_rpm as nominalSpeedRpm",
      "d.groove",
      "d.cut",
      "d.recording_date as recordingDate",
      "d.recorded_from_year as recordedFromYear",
      "d.recorded_to_year as recordedToYear",
      "d.condition_grade as conditionGrade",
      "d.condition_flags as conditionFlags",
      "d.condition_notes as conditionNotes",
      "d.handling_notes as handlingNotes",
      "d.version",
    ]);
}

function selectDiscs(db: Db) {
  return selectDiscFields(db).select(["d.created_at as createdAt", "d.updated_at as updatedAt"]);
}

type DiscRow = Awaited<ReturnType<ReturnType<typeof selectDiscs>["execute"]>>[number];

async function withSides(db: Db, rows: DiscRow[]): Promise<DiscRecord[]> {
  const sides = await readSides(
    db,
    rows.map((d) => d.id),
  );
  return rows.map((d) => ({
    ...withNumbers(d),
    sides: sides.get(d.id) ?? [],
  }));
}

export async function readSides(db: Db, discIds: string[]): Promise<Map<string, SideRecord[]>> {
  if (!discIds.length) return new Map();
  const rows = await db
    .selectFrom("sides as s")
    .leftJoin("users as u", "u.id", "s.assigned_engineer_id")
    .select([
      ...sideFieldColumns,
      "s.status",
      "s.assigned_engineer_id as assignedEngineerId",
      "u.name as assignedEngineerName",
      "s.return_reason as returnReason",
      "s.current_transfer_id as currentTransferId",
      "s.current_curve_choice_id as currentCurveChoiceId",
      "s.current_render_id as currentRenderId",
      "s.version",
    ])
    .where(sql<boolean>`s.disc_id = ANY(${discIds}::uuid[])`)
    .orderBy("s.disc_id")
    .orderBy(sql`lower(s.designation)`)
    .execute();
  return byDisc(rows);
}

/** Rebuilds the disc's search columns and title sort key from its own fields and its sides' (same transaction as the change). */
export async function refreshSearch(db: Db, discIds: string[]): Promise<void> {
  if (!discIds.length) return;
  await sql`
    UPDATE discs d SET
      search_tsv = to_tsvector('simple', d.label_name || ' ' || d.catalogue_number || ' ' || coalesce(s.words, '')),
      search_codes = lower(d.shelf_mark || ' ' || d.catalogue_number || ' ' || coalesce(s.codes, '')),
      first_title = nullif(s.first_title, '')
    FROM (
      SELECT dd.id,
             (array_agg(sd.title ORDER BY lower(sd.designation)))[1] AS first_title,
             string_agg(sd.title || ' ' || sd.performers || ' ' || sd.matrix_number, ' ') AS words,
             string_agg(sd.matrix_number, ' ') AS codes
      FROM discs dd LEFT JOIN sides sd ON sd.disc_id = dd.id
      WHERE dd.id = ANY(${discIds}::uuid[])
      GROUP BY dd.id
    ) s
    WHERE d.id = s.id`.execute(db);
}
