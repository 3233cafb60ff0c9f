import { type Kysely, sql } from "kysely";
import type { Database } from "../../db/types";
import { type DiscListQuery, discListQuerySchema } from "../validation/catalogue";
import { readSides, type SideRecord } from "./records";

type Db = Kysely<Database>;

export interface DiscListRow {
  id: string;
  shelfMark: string;
  labelName: string;
  catalogueNumber: string;
  format: string;
  nominalSpeedRpm: number;
  accessionIdentifier: string;
  conditionGrade: string;
  updatedAt: Date;
  sides: Pick<
    SideRecord,
    "id" | "designation" | "matrixNumber" | "title" | "status" | "assignedEngineerName"
  >[];
}

const sortColumns = {
  shelfMark: "d.shelf_mark",
  labelName: "d.label_name",
  catalogueNumber: "d.catalogue_number",
  format: "d.format",
  speed: "d.nominal_speed_rpm",
  updatedAt: "d.updated_at",
} as const;

/** Escapes LIKE's wildcards so the text matches only itself. */
export function escapeLike(s: string): string {
  return s.replace(/[\\%_]/g, (c) => `\\${c}`);
}

/** The filters of a list query, without its paging. */
type DiscFilter = Omit<DiscListQuery, "page" | "pageSize">;

/** The catalogue's WHERE clause for a list query: shared by the page, the export and the benchmark. */
export function filteredDiscs(db: Db, q: DiscFilter) {
  let query = db.selectFrom("discs as d");
  if (q.format) query = query.where("d.format", "=", q.format);
  if (q.accession) query = query.where("d.accession_id", "=", q.accession);
  if (q.speed) query = query.where("d.nominal_speed_rpm", "=", q.speed);
  if (q.status) {
    const status = q.status;
    query = query.where((eb) =>
      eb.exists(
        eb
          .selectFrom("sides as s")
          .select("s.id")
          .whereRef("s.disc_id", "=", "d.id")
          .where("s.status", "=", status),
      ),
    );
  }
  if (q.engineer) {
    const engineer = q.engineer;
    query = query.where((eb) =>
      eb.exists(
        eb
          .selectFrom("sides as s")
          .select("s.id")
          .whereRef("s.disc_id", "=", "d.id")
          .where("s.assigned_engineer_id", "=", engineer),
      ),
    );
  }
  if (q.q) {
    const text = q.q;
    // Words through full-text search; catalogue, matrix and shelf numbers by substring (trigram index).
    query = query.where((eb) =>
      eb.or([
        eb(sql`d.search_tsv`, "@@", sql`websearch_to_tsquery('simple', ${text})`),
        eb("d.search_codes", "like", `%${escapeLike(text.toLowerCase())}%`),
      ]),
    );
  }
  return query;
}

/** The list's order: the chosen column, then the shelf mark in the same direction, so one index serves the whole ordering. */
function ordering(q: DiscFilter) {
  const direction: "asc" | "desc" = q.sort.startsWith("-") ? "desc" : "asc";
  return { column: sortColumns[q.sort.replace(/^-/, "") as keyof typeof sortColumns], direction };
}

/** Every disc a list query selects, in the list's order and without paging (the CSV export). */
export async function listDiscIds(db: Db, q: DiscFilter): Promise<string[]> {
  const { column, direction } = ordering(q);
  const rows = await filteredDiscs(db, q)
    .select("d.id")
    .orderBy(column, direction)
    .orderBy("d.shelf_mark", direction)
    .execute();
  return rows.map((r) => r.id);
}

/** The catalogue: filtered, searched, sorted and paged on the server. */
export async function listDiscsWith(
  db: Db,
  input: unknown,
): Promise<{ rows: DiscListRow[]; total: number; page: number; pageSize: number }> {
  const q = discListQuerySchema.parse(input);
  const { column, direction } = ordering(q);
  const [rows, count] = await Promise.all([
    filteredDiscs(db, q)
      .innerJoin("accessions as a", "a.id", "d.accession_id")
      .select([
        "d.id",
        "d.shelf_mark as shelfMark",
        "d.label_name as labelName",
        "d.catalogue_number as catalogueNumber",
        "d.format",
        "d.nominal_speed_rpm as nominalSpeedRpm",
        "a.identifier as accessionIdentifier",
        "d.condition_grade as conditionGrade",
        "d.updated_at as updatedAt",
      ])
      .orderBy(column, direction)
      .orderBy("d.shelf_mark", direction)
      .limit(q.pageSize)
      .offset((q.page - 1) * q.pageSize)
      .execute(),
    filteredDiscs(db, q)
      .select(sql<number>`count(*)::int`.as("n"))
      .executeTakeFirstOrThrow(),
  ]);
  const sides = await readSides(
    db,
    rows.map((r) => r.id),
  );
  return {
    rows: rows.map((r) => ({
      ...r,
      nominalSpeedRpm: Number(r.nominalSpeedRpm),
      sides: (sides.get(r.id) ?? []).map(
        ({ id, designation, matrixNumber, title, status, assignedEngineerName }) => ({
          id,
          designation,
          matrixNumber,
          title,
          status,
          assignedEngineerName,
        }),
      ),
    })),
    total: count.n,
    page: q.page,
    pageSize: q.pageSize,
  };
}
