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
 * in two queries whatever the number of marks (the unique index on lower(shelf_mark)
 * answers the first, the sides' index on disc_id the second). They read only the fields a
 * spreadsheet holds: an import of thousands of rows does not wait for the workflow's.
 */
export async function readDiscFieldsByShelfMarks(db: Db, shelfMarks: string[]): Promise<DiscFieldsRecord[]> {
  const marks = [...new Set(shelfMarks.map((m) => m.toLowerCase()))];
  if (!marks.length) return [];
  const discs = await selectDiscFields(db)
    .where(sql<boolean>`lower(d.shelf_mark) = ANY(${marks}::text[])`)
    .execute();
  if (!discs.length) return [];
  const sides = await db
    .selectFrom("sides as s")
    .select(sideFieldColumns)
    .where(sql<boolean>`s.disc_id = ANY(${discs.map((d) => d.id)}::uuid[])`)
    .orderBy("s.disc_id")
    .orderBy(sql`lower(s.designation)`)
    .execute();
  const sidesOf = byDisc(sides);
  return discs.map((d) => ({ ...withNumbers(d), sides: sidesOf.get(d.id) ?? [] }));
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
