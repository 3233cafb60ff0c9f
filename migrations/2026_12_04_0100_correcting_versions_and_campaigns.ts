import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// Correcting preset versions and re-render campaigns.
// - A preset version may say which earlier versions of the same preset it corrects, with a
//   note (what was wrong, on what evidence). The versions it names are numbers of its own
//   preset (the row's preset_id), each earlier than itself: the database refuses a note-less
//   correction, a version correcting itself or a later one, and a note without a correction.
//   Since versions are numbered 1, 2, 3 … with no gaps, every earlier number exists.
// - A campaign re-chooses the curve of many sides from a correcting version and renders them
//   again; campaign_sides holds one row per side per campaign with its state, and a side is
//   in at most one waiting campaign at a time.
// - Two new steps of the side lifecycle: a campaign takes an approved or in-review side back
//   to "curve chosen" (its access copy must be rendered again and reviewed).
export async function up(db: Kysely<any>): Promise<void> {
  await sql`
    ALTER TABLE curve_preset_versions
      ADD COLUMN corrects_versions integer[] NOT NULL DEFAULT '{}',
      ADD COLUMN correction_note text`.execute(db);
  await sql`
    ALTER TABLE curve_preset_versions
      ADD CONSTRAINT curve_preset_versions_correction_note CHECK (
        (cardinality(corrects_versions) = 0 AND correction_note IS NULL)
        OR (cardinality(corrects_versions) > 0 AND correction_note IS NOT NULL AND length(btrim(correction_note)) >= 10)
      ),
      ADD CONSTRAINT curve_preset_versions_corrects_earlier CHECK (
        array_position(corrects_versions, NULL) IS NULL
        AND 1 <= ALL (corrects_versions)
        AND version > ALL (corrects_versions)
      )`.execute(db);

  await db.schema
    .createTable("campaigns")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("preset_id", "uuid", (c) => c.notNull())
    .addColumn("correcting_version", "integer", (c) => c.notNull())
    .addColumn("title", "text", (c) => c.notNull())
    .addColumn("rationale", "text", (c) => c.notNull())
    .addColumn("state", "text", (c) => c.notNull().defaultTo("running"))
    .addColumn("started_by", "uuid", (c) => c.notNull().references("users.id"))
    .addColumn("started_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("finished_at", "timestamptz")
    .addColumn("cancelled_by", "uuid", (c) => c.references("users.id"))
    .addColumn("cancelled_at", "timestamptz")
    .addColumn("mailed_at", "timestamptz")
    .addForeignKeyConstraint(
      "campaigns_correcting_version",
      ["preset_id", "correcting_version"],
      "curve_preset_versions",
      ["preset_id", "version"],
    )
    // Finished when every side is done, failed or cancelled; a cancel stops what has not
    // started, so a cancelled campaign still runs until its renders under way finish.
    .addCheckConstraint("campaigns_state", sql`state IN ('running', 'finished')`)
    .addCheckConstraint("campaigns_finished", sql`(state = 'running') = (finished_at IS NULL)`)
    .addCheckConstraint("campaigns_cancelled", sql`(cancelled_at IS NULL) = (cancelled_by IS NULL)`)
    .execute();
  await sql`CREATE INDEX campaigns_started ON campaigns (started_at DESC)`.execute(db);

  await db.schema
    .createTable("campaign_sides")
    .addColumn("campaign_id", "uuid", (c) => c.notNull().references("campaigns.id"))
    .addColumn("side_id", "uuid", (c) => c.notNull().references("sides.id"))
    .addColumn("state", "text", (c) => c.notNull().defaultTo("waiting"))
    .addColumn("status_before", "text", (c) => c.notNull())
    .addColumn("from_choice_id", "uuid", (c) => c.notNull().references("curve_choices.id"))
    .addColumn("from_version", "integer", (c) => c.notNull())
    .addColumn("choice_id", "uuid", (c) => c.references("curve_choices.id"))
    .addColumn("render_id", "uuid", (c) => c.references("renders.id"))
    .addColumn("to_review", "boolean", (c) => c.notNull())
    .addColumn("attempts", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("error", "text")
    .addColumn("outcome", "text")
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addPrimaryKeyConstraint("campaign_sides_pkey", ["campaign_id", "side_id"])
    .addCheckConstraint("campaign_sides_state", sql`state IN ('waiting', 'done', 'failed', 'cancelled')`)
    .addCheckConstraint("campaign_sides_failed_reason", sql`(state = 'failed') = (error IS NOT NULL)`)
    .addCheckConstraint("campaign_sides_attempts", sql`attempts >= 0`)
    .execute();
  // The new choice and render belong to the side they are recorded for.
  await sql`ALTER TABLE campaign_sides ADD CONSTRAINT campaign_sides_choice_of_side FOREIGN KEY (choice_id, side_id) REFERENCES curve_choices (id, side_id)`.execute(
    db,
  );
  await sql`ALTER TABLE campaign_sides ADD CONSTRAINT campaign_sides_render_of_side FOREIGN KEY (render_id, side_id) REFERENCES renders (id, side_id)`.execute(
    db,
  );
  // One waiting campaign per side: two campaigns never re-choose the same side at once.
  await sql`CREATE UNIQUE INDEX campaign_sides_one_waiting ON campaign_sides (side_id) WHERE state = 'waiting'`.execute(
    db,
  );
  await sql`CREATE INDEX campaign_sides_render ON campaign_sides (render_id) WHERE render_id IS NOT NULL`.execute(
    db,
  );

  await sql`INSERT INTO side_transitions VALUES ('approved', 'curve_chosen'), ('in_review', 'curve_chosen') ON CONFLICT DO NOTHING`.execute(
    db,
  );
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`DELETE FROM side_transitions WHERE (from_status, to_status) IN (('approved', 'curve_chosen'), ('in_review', 'curve_chosen'))`.execute(
    db,
  );
  await db.schema.dropTable("campaign_sides").execute();
  await db.schema.dropTable("campaigns").execute();
  await sql`
    ALTER TABLE curve_preset_versions
      DROP CONSTRAINT curve_preset_versions_corrects_earlier,
      DROP CONSTRAINT curve_preset_versions_correction_note,
      DROP COLUMN correction_note,
      DROP COLUMN corrects_versions`.execute(db);
}
