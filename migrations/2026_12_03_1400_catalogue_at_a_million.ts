import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// The catalogue at a million discs. A sort key for the first side's title (null when it
// has none, so untitled discs come last either way), kept on the disc by the statement
// that keeps its search columns; an index for each new order, both directions with
// blanks last, ending in the shelf mark as the list orders.
export async function up(db: Kysely<unknown>): Promise<void> {
  await sql`ALTER TABLE discs ADD COLUMN first_title text`.execute(db);
  await sql`
    UPDATE discs d SET first_title = s.title
    FROM (SELECT DISTINCT ON (disc_id) disc_id, title FROM sides ORDER BY disc_id, lower(designation)) s
    WHERE d.id = s.disc_id AND s.title <> ''`.execute(db);
  await sql`CREATE INDEX discs_sort_title ON discs (first_title, shelf_mark)`.execute(db);
  await sql`CREATE INDEX discs_sort_title_desc ON discs (first_title DESC NULLS LAST, shelf_mark DESC)`.execute(
    db,
  );
  await sql`CREATE INDEX discs_sort_year ON discs (recorded_from_year, shelf_mark)`.execute(db);
  await sql`CREATE INDEX discs_sort_year_desc ON discs (recorded_from_year DESC NULLS LAST, shelf_mark DESC)`.execute(
    db,
  );
  // Format and speed filtered together (a common pair of filters): one index finds the
  // matches, in shelf-mark order, and counts them, even when none match.
  await sql`CREATE INDEX discs_format_speed ON discs (format, nominal_speed_rpm, shelf_mark)`.execute(db);
  // A flat transfer identical to another side's is found by its checksum before it is accepted.
  await sql`CREATE INDEX transfers_sha256 ON transfers (sha256)`.execute(db);
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await sql`DROP INDEX transfers_sha256`.execute(db);
  await sql`DROP INDEX discs_format_speed`.execute(db);
  for (const i of ["discs_sort_year_desc", "discs_sort_year", "discs_sort_title_desc", "discs_sort_title"])
    await sql`DROP INDEX ${sql.raw(i)}`.execute(db);
  await sql`ALTER TABLE discs DROP COLUMN first_title`.execute(db);
}
