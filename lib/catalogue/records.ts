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
  const discs = await selectDiscFieldsWithSides(db)
    .where(sql<boolean>`lower(d.shelf_mark) = ANY(${marks}::text[])`)
    .execute();
  return discs.map(toFieldsRecord);
}

/** The fields of discs and, as one JSON list per disc, their sides' (in the order of their designations). */
function selectDiscFieldsWithSides(db: Db) {
  return selectDiscFields(db).select(
    sql<DiscFieldsRecord["sides"]>`(
        SELECT coalesce(json_agg(json_build_object(
                 'id', s.id, 'designation', s.designation, 'matrixNumber', s.matrix_number, 'take', s.take,
                 'title', s.title, 'performers', s.performers, 'notes', s.notes) ORDER BY lower(s.designation)), '[]'::json)
        FROM sides s WHERE s.disc_id = d.id)`.as("sides"),
  );
}

type DiscFieldsRow = Awaited<ReturnType<ReturnType<typeof selectDiscFieldsWithSides>["execute"]>>[number];

/** A row read only to be turned into its record: its numbers made numbers in place. */
function toFieldsRecord(row: DiscFieldsRow): DiscFieldsRecord {
  const record = row as unknown as DiscFieldsRecord;
  setNumbers(record, row);
  return record;
}

/**
 * Like `readDiscFieldsByShelfMarks`, for a file brought back whose rows of a disc were left
 * as exported (csv-format.ts's `checkedVersions` says which, and at which version): the
 * discs still at that version changed nothing since, and are only named (`atVersion`);
 * the others (and every shelf mark asked with version "") are read. One round trip; a
 * long list is read in two halves at once, on two connections, which the server works on
 * together.
 */
export async function readDiscFieldsUnlessAtVersion(
  db: Db,
  asked: { key: string; version: string }[],
): Promise<{ atVersion: Set<string>; records: DiscFieldsRecord[] }> {
  const half = asked.length >= 2 * readTogether ? Math.ceil(asked.length / 2) : asked.length;
  const parts = await Promise.all(
    [asked.slice(0, half), asked.slice(half)].filter((a) => a.length).map((a) => unlessAtVersion(db, a)),
  );
  const atVersion = new Set<string>();
  const records: DiscFieldsRecord[] = [];
  for (const rows of parts)
    for (const { mark, same, record } of rows) {
      if (same) atVersion.add(mark);
      else if (record) records.push(toFieldsRecord(record));
    }
  return { atVersion, records };
}

/** The fewest discs asked in each half: fewer are asked in one query. */
const readTogether = 250;

/** Joins the shelf marks, and the versions (digits, or "" for none), sent as one text each. */
const askSeparator = "\x1f";

async function unlessAtVersion(db: Db, asked: { key: string; version: string }[]) {
  // The keys come from a file none of whose cells holds the separator (csv-format.ts's `checkedVersions`).
  const odd = asked.find((a) => a.key.includes(askSeparator) || a.version.includes(askSeparator));
  if (odd) throw new Error(`the shelf mark "${odd.key}" or its version holds U+001F, which joins them here`);
  const marks = asked.map((a) => a.key).join(askSeparator);
  const versions = asked.map((a) => a.version).join(askSeparator);
  // Each disc looked up once (materialised), and only the others read, as one JSON record
  // each (the columns of selectDiscFieldsWithSides, under their names).
  const fields = selectDiscFieldsWithSides(db).where(sql<boolean>`d.id = c.id`);
  const rows = await sql<{ mark: string; same: boolean; record: DiscFieldsRow | null }>`
    WITH c AS MATERIALIZED (
      SELECT f.mark, d.id, coalesce(f.version <> '' AND f.version = d.version::text, false) AS same
      FROM unnest(string_to_array(${marks}, E'\x1f'), string_to_array(${versions}, E'\x1f')) AS f(mark, version)
      JOIN discs d ON lower(d.shelf_mark) = f.mark
    )
    SELECT c.mark, c.same, CASE WHEN c.same THEN NULL ELSE (SELECT row_to_json(x) FROM (${fields}) x) END AS record
    FROM c`.execute(db);
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
