import { sql, type Kysely, type Transaction } from "kysely";
import type { Database, SideStatus } from "../../db/types";

type Db = Kysely<Database> | Transaction<Database>;

export interface SideRecord {
  id: string;
  designation: string;
  matrixNumber: string;
  take: string;
  title: string;
  performers: string;
  notes: string;
  status: SideStatus;
  assignedEngineerId: string | null;
  assignedEngineerName: string | null;
  returnReason: string | null;
  /** What the side stands on now: its current flat transfer, curve choice and access copy. */
  currentTransferId: string | null;
  currentCurveChoiceId: string | null;
  currentRenderId: string | null;
  version: number;
}

export interface DiscRecord {
  id: string;
  accessionId: string;
  accessionIdentifier: string;
  shelfMark: string;
  labelName: string;
  catalogueNumber: string;
  format: Database["discs"]["format"];
  base: Database["discs"]["base"];
  diameterIn: number | null;
  nominalSpeedRpm: number;
  groove: "coarse" | "micro";
  cut: "lateral" | "vertical";
  recordingDate: string | null;
  recordedFromYear: number | null;
  recordedToYear: number | null;
  conditionGrade: string;
  conditionFlags: string[];
  conditionNotes: string;
  handlingNotes: string;
  version: number;
  createdAt: Date;
  updatedAt: Date;
  sides: SideRecord[];
}

/** Reads one disc with its sides, explicitly selected; null when there is none. */
export async function readDisc(db: Db, id: string): Promise<DiscRecord | null> {
  if (!/^[0-9a-f-]{36}$/i.test(id)) return null;
  const [disc] = await readDiscs(db, [id]);
  return disc ?? null;
}

/** Reads many discs with their sides in two queries, in the order of `ids` (missing ones left out). */
export async function readDiscs(db: Db, ids: string[]): Promise<DiscRecord[]> {
  if (!ids.length) return [];
  const rows = await db
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
      "d.created_at as createdAt",
      "d.updated_at as updatedAt",
    ])
    .where("d.id", "in", ids)
    .execute();
  const sides = await readSides(db, ids);
  const byId = new Map(rows.map((d) => [d.id, d]));
  return ids.flatMap((id) => {
    const d = byId.get(id);
    return d
      ? [
          {
            ...d,
            diameterIn: d.diameterIn === null ? null : Number(d.diameterIn),
            nominalSpeedRpm: Number(d.nominalSpeedRpm),
            sides: sides.get(id) ?? [],
          },
        ]
      : [];
  });
}

export async function readSides(db: Db, discIds: string[]): Promise<Map<string, SideRecord[]>> {
  const out = new Map<string, SideRecord[]>();
  if (!discIds.length) return out;
  const rows = await db
    .selectFrom("sides as s")
    .leftJoin("users as u", "u.id", "s.assigned_engineer_id")
    .select([
      "s.id",
      "s.disc_id as discId",
      "s.designation",
      "s.matrix_number as matrixNumber",
      "s.take",
      "s.title",
      "s.performers",
      "s.notes",
      "s.status",
      "s.assigned_engineer_id as assignedEngineerId",
      "u.name as assignedEngineerName",
      "s.return_reason as returnReason",
      "s.current_transfer_id as currentTransferId",
      "s.current_curve_choice_id as currentCurveChoiceId",
      "s.current_render_id as currentRenderId",
      "s.version",
    ])
    .where("s.disc_id", "in", discIds)
    .orderBy("s.disc_id")
    .orderBy(sql`lower(s.designation)`)
    .execute();
  for (const { discId, ...side } of rows) {
    const list = out.get(discId) ?? [];
    list.push(side);
    out.set(discId, list);
  }
  return out;
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
