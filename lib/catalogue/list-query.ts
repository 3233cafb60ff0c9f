import { type Kysely, type OrderByItemBuilder, sql } from "kysely";
import { z } from "zod";
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
  recordedFromYear: number | null;
  recordedToYear: number | null;
  updatedAt: Date;
  /** In designation order: the first is the side whose title and performers the table shows. */
  sides: Pick<
    SideRecord,
    "id" | "designation" | "matrixNumber" | "title" | "performers" | "status" | "assignedEngineerName"
  >[];
}

/** A count stops here: past it the page says "more than 10 000" instead of counting a million rows. */
export const countCap = 10_000;

export interface DiscListPage {
  rows: DiscListRow[];
  /** Exact up to countCap; countCap when there are more (then totalIsCapped). */
  total: number;
  totalIsCapped: boolean;
  /**
   * Capped on the planner's estimate of a broad search, not counted: the page says so, since
   * an estimate can be off (a page that is not full always gives the exact total instead).
   */
  totalIsEstimated: boolean;
  page: number;
  pageSize: number;
}

const sortColumns = {
  shelfMark: "d.shelf_mark",
  labelName: "d.label_name",
  catalogueNumber: "d.catalogue_number",
  title: "d.first_title",
  year: "d.recorded_from_year",
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

/**
 * The list's order: the chosen column, then the shelf mark in the same direction, so one
 * index serves the whole ordering. Title and year may be blank: blanks come last either
 * way (each direction has its index, migrations/2026_12_03_1400_catalogue_at_a_million.ts).
 */
export function listOrdering(q: DiscFilter) {
  const direction: "asc" | "desc" = q.sort.startsWith("-") ? "desc" : "asc";
  const column = sortColumns[q.sort.replace(/^-/, "") as keyof typeof sortColumns];
  const blanksLast = column === "d.first_title" || column === "d.recorded_from_year";
  return {
    column,
    direction,
    /** The chosen column's modifiers: its direction, and blanks last where it can be blank. */
    modifiers: (ob: OrderByItemBuilder) => {
      const o = direction === "desc" ? ob.desc() : ob.asc();
      return blanksLast ? o.nullsLast() : o;
    },
  };
}

/** Every disc a list query selects, in the list's order and without paging (the CSV export). */
export async function listDiscIds(db: Db, q: DiscFilter): Promise<string[]> {
  const { column, direction, modifiers } = listOrdering(q);
  const rows = await filteredDiscs(db, q)
    .select("d.id")
    .orderBy(column, modifiers)
    .orderBy("d.shelf_mark", direction)
    .execute();
  return rows.map((r) => r.id);
}

/**
 * The count query of countDiscs (the benchmark prints its plan). A list filtered by a side's
 * status or engineer alone is counted from that side index, one disc per run of its sides,
 * without walking the discs (the semi join walked the disc ids in order, some 55 000 of them
 * to find 10 001 discs with an assigned side).
 */
export function cappedCountQuery(db: Db, q: DiscFilter) {
  const sideFilterOnly =
    !q.q && !q.format && !q.accession && !q.speed && (q.status ? !q.engineer : !!q.engineer);
  if (sideFilterOnly) {
    let sides = db.selectFrom("sides as s").select("s.disc_id");
    if (q.status) sides = sides.where("s.status", "=", q.status);
    if (q.engineer) sides = sides.where("s.assigned_engineer_id", "=", q.engineer);
    return db
      .selectFrom(
        sides
          .distinct()
          .limit(countCap + 1)
          .as("capped"),
      )
      .select(sql<number>`count(*)::int`.as("n"));
  }
  return db
    .selectFrom(
      filteredDiscs(db, q)
        .select(sql<number>`1`.as("one"))
        .limit(countCap + 1)
        .as("capped"),
    )
    .select(sql<number>`count(*)::int`.as("n"));
}

/**
 * A search the planner expects to select at least this many discs is not counted row by
 * row: it says "more than 10 000" on the estimate (twice the cap, so an estimate off by half
 * still holds). Finding 10 001 matches of a word in a quarter of a million discs means
 * reading some 40 000 rows (a GIN bitmap of 245 000 entries is slower still), several times
 * the 50 ms a list may take; the estimate costs one plan.
 */
export const estimatedPast = 2 * countCap;

const planSchema = z.tuple([z.object({ Plan: z.object({ "Plan Rows": z.number().nonnegative() }) })]);

/** The planner's estimate of how many discs a list query selects (from the table's statistics; nothing is read). */
export async function estimateDiscs(db: Db, q: DiscFilter): Promise<number> {
  const [row] = await filteredDiscs(db, q)
    .select(sql<number>`1`.as("one"))
    .explain("json");
  return planSchema.parse(row["QUERY PLAN"])[0].Plan["Plan Rows"];
}

interface DiscCount {
  total: number;
  totalIsCapped: boolean;
  /** Capped on the planner's estimate, not counted: listDiscsWith corrects it from a page that is not full. */
  estimated: boolean;
}

/**
 * How many discs a list query selects, counted up to countCap + 1 only: past countCap the
 * page says "more than 10 000", and a million-disc catalogue is never counted row by row.
 * A search the planner expects to be broad (estimatedPast) is not counted at all.
 */
export async function countDiscs(db: Db, q: DiscFilter): Promise<DiscCount> {
  if (q.q && (await estimateDiscs(db, q)) >= estimatedPast)
    return { total: countCap, totalIsCapped: true, estimated: true };
  const { n } = await cappedCountQuery(db, q).executeTakeFirstOrThrow();
  return n > countCap
    ? { total: countCap, totalIsCapped: true, estimated: false }
    : { total: n, totalIsCapped: false, estimated: false };
}

/**
 * The count a page answers with. An estimated count is checked against the page itself: a
 * page that is not full ends the list, so the total is known exactly (and an empty page past
 * page 1 says nothing, so that list is counted after all).
 */
async function pageTotal(
  db: Db,
  q: DiscListQuery,
  count: DiscCount,
  rowsOnPage: number,
): Promise<{ total: number; totalIsCapped: boolean; totalIsEstimated: boolean }> {
  if (!count.estimated || rowsOnPage === q.pageSize)
    return { total: count.total, totalIsCapped: count.totalIsCapped, totalIsEstimated: count.estimated };
  if (rowsOnPage === 0 && q.page > 1) {
    const { n } = await cappedCountQuery(db, q).executeTakeFirstOrThrow();
    return n > countCap
      ? { total: countCap, totalIsCapped: true, totalIsEstimated: false }
      : { total: n, totalIsCapped: false, totalIsEstimated: false };
  }
  const n = (q.page - 1) * q.pageSize + rowsOnPage;
  return n > countCap
    ? { total: countCap, totalIsCapped: true, totalIsEstimated: false }
    : { total: n, totalIsCapped: false, totalIsEstimated: false };
}

/**
 * A search with at most this many matches (counted exactly) gathers them all and sorts them
 * (a bitmap scan of its indexes, then a top-N sort) instead of walking the sort's index with
 * the search as a filter: the walk reads about pageEnd × catalogue ÷ matches rows, which
 * at a million discs passes the number of matches below some 7 000. The planner makes the
 * choice on its estimate of the matches, which for a substring of the numbers can be ten
 * times too many (it walked 42 681 rows, 726 ms, for the 1 222 discs of "QU 41").
 */
export const gatherUpTo = 5_000;

function gathers(count: DiscCount): boolean {
  return !count.estimated && !count.totalIsCapped && count.total <= gatherUpTo;
}

/** One page of discs in the list's order, with the accession's identifier. */
function pageRows(db: Db, q: DiscListQuery, gather: boolean) {
  const { column, direction, modifiers } = listOrdering(q);
  // OFFSET 0 keeps the filter a subquery of its own: planned for all its matches, not for the page.
  const source = gather
    ? (db
        .selectFrom(filteredDiscs(db, q).selectAll("d").offset(0).as("d"))
        .innerJoin("accessions as a", "a.id", "d.accession_id") as unknown as ReturnType<typeof joinedDiscs>)
    : joinedDiscs(db, q);
  return source
    .select([
      "d.id",
      "d.shelf_mark as shelfMark",
      "d.label_name as labelName",
      "d.catalogue_number as catalogueNumber",
      "d.format",
      "d.nominal_speed_rpm as nominalSpeedRpm",
      "a.identifier as accessionIdentifier",
      "d.condition_grade as conditionGrade",
      "d.recorded_from_year as recordedFromYear",
      "d.recorded_to_year as recordedToYear",
      "d.updated_at as updatedAt",
    ])
    .orderBy(column, modifiers)
    .orderBy("d.shelf_mark", direction)
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
    .execute();
}

function joinedDiscs(db: Db, q: DiscFilter) {
  return filteredDiscs(db, q).innerJoin("accessions as a", "a.id", "d.accession_id");
}

/** The catalogue: filtered, searched, sorted and paged on the server. */
export async function listDiscsWith(db: Db, input: unknown): Promise<DiscListPage> {
  const q = discListQuerySchema.parse(input);
  // A search is counted first: a narrow one (counted exactly, few matches) then gathers its
  // matches and sorts them, rather than walking the sort's index in search of them.
  const [rows, count] = q.q
    ? await countDiscs(db, q).then(async (c) => [await pageRows(db, q, gathers(c)), c] as const)
    : await Promise.all([pageRows(db, q, false), countDiscs(db, q)]);
  const [sides, total] = await Promise.all([
    readSides(
      db,
      rows.map((r) => r.id),
    ),
    pageTotal(db, q, count, rows.length),
  ]);
  return {
    rows: rows.map((r) => ({
      ...r,
      nominalSpeedRpm: Number(r.nominalSpeedRpm),
      sides: (sides.get(r.id) ?? []).map(
        ({ id, designation, matrixNumber, title, performers, status, assignedEngineerName }) => ({
          id,
          designation,
          matrixNumber,
          title,
          performers,
          status,
          assignedEngineerName,
        }),
      ),
    })),
    ...total,
    page: q.page,
    pageSize: q.pageSize,
  };
}
