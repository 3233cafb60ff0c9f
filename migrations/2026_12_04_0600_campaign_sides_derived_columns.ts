import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// A campaign side no longer stores what follows from its other columns: whether it goes
// back through review follows from the status it had before the campaign (status_before),
// and the version it rested on is its former choice's (from_choice_id). Two copies of one
// fact can disagree; one cannot.
export async function up(db: Kysely<unknown>): Promise<void> {
  await sql`ALTER TABLE campaign_sides DROP COLUMN to_review, DROP COLUMN from_version`.execute(db);
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await sql`ALTER TABLE campaign_sides ADD COLUMN to_review boolean, ADD COLUMN from_version integer`.execute(
    db,
  );
  await sql`
    UPDATE campaign_sides cs
    SET to_review = cs.status_before IN ('rendered', 'in_review', 'approved'),
        from_version = c.preset_version
    FROM curve_choices c WHERE c.id = cs.from_choice_id`.execute(db);
  await sql`ALTER TABLE campaign_sides ALTER COLUMN to_review SET NOT NULL, ALTER COLUMN from_version SET NOT NULL`.execute(
    db,
  );
}
