import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// Every sort the catalogue offers, with the shelf mark as tie-breaker in the same
// direction, can walk an index and stop after one page (scripts/bench/catalogue.ts).
export async function up(db: Kysely<any>): Promise<void> {
  await sql`CREATE INDEX discs_sort_shelf_mark ON discs (shelf_mark)`.execute(db);
  await sql`CREATE INDEX discs_sort_label ON discs (label_name, shelf_mark)`.execute(db);
  await sql`CREATE INDEX discs_sort_catalogue_number ON discs (catalogue_number, shelf_mark)`.execute(db);
  await sql`CREATE INDEX discs_sort_format ON discs (format, shelf_mark)`.execute(db);
  await sql`CREATE INDEX discs_sort_speed ON discs (nominal_speed_rpm, shelf_mark)`.execute(db);
  await sql`CREATE INDEX discs_sort_updated ON discs (updated_at, shelf_mark)`.execute(db);
  for (const old of [
    "discs_format",
    "discs_speed",
    "discs_updated",
    "discs_label",
    "discs_catalogue_number",
  ]) {
    await sql`DROP INDEX ${sql.raw(old)}`.execute(db);
  }
}

export async function down(db: Kysely<any>): Promise<void> {
  for (const i of [
    "discs_sort_shelf_mark",
    "discs_sort_label",
    "discs_sort_catalogue_number",
    "discs_sort_format",
    "discs_sort_speed",
    "discs_sort_updated",
  ]) {
    await sql`DROP INDEX ${sql.raw(i)}`.execute(db);
  }
  await sql`CREATE INDEX discs_format ON discs (format)`.execute(db);
  await sql`CREATE INDEX discs_speed ON discs (nominal_speed_rpm)`.execute(db);
  await sql`CREATE INDEX discs_updated ON discs (updated_at DESC)`.execute(db);
  await sql`CREATE INDEX discs_label ON discs (label_name)`.execute(db);
  await sql`CREATE INDEX discs_catalogue_number ON discs (catalogue_number)`.execute(db);
}
