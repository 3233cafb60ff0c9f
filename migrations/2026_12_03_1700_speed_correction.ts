import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// Speed correction: a curve choice may ask the render to correct the speed (a disc cut at
// another speed than it was transferred at is resampled by cut ÷ transfer before the
// access copy is written). Off for every choice made before.
export async function up(db: Kysely<unknown>): Promise<void> {
  await sql`ALTER TABLE curve_choices ADD COLUMN correct_speed boolean NOT NULL DEFAULT false`.execute(db);
  await sql`
    ALTER TABLE curve_choices ADD CONSTRAINT curve_choices_correct_speed
    CHECK (NOT correct_speed OR cut_speed_rpm <> transfer_speed_rpm)`.execute(db);
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await sql`ALTER TABLE curve_choices DROP CONSTRAINT curve_choices_correct_speed`.execute(db);
  await sql`ALTER TABLE curve_choices DROP COLUMN correct_speed`.execute(db);
}
