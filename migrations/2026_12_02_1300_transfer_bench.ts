import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// The transfer bench: each side's curve choices (every choice kept; the latest is the
// side's current curve), the flat transfers, and the renders of access copies.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("curve_choices")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("side_id", "uuid", (c) => c.notNull().references("sides.id"))
    .addColumn("preset_id", "uuid", (c) => c.references("curve_presets.id"))
    .addColumn("preset_version", "integer")
    .addColumn("preset_name", "text")
    .addColumn("preset_spec", "jsonb")
    .addColumn("overrides", "jsonb", (c) => c.notNull().defaultTo(sql`'{}'::jsonb`))
    .addColumn("spec", "jsonb", (c) => c.notNull())
    .addColumn("cut_speed_rpm", sql`numeric(6,2)`, (c) => c.notNull())
    .addColumn("transfer_speed_rpm", sql`numeric(6,2)`, (c) => c.notNull())
    .addColumn("rationale", "text", (c) => c.notNull())
    .addColumn("evidence_kind", "text", (c) => c.notNull())
    .addColumn("evidence", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("chosen_by", "uuid", (c) => c.notNull().references("users.id"))
    .addColumn("chosen_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addCheckConstraint(
      "curve_choices_evidence",
      sql`evidence_kind IN ('published_guidance', 'test_disc', 'listening', 'disc_documentation', 'other')`,
    )
    .addCheckConstraint("curve_choices_speeds", sql`cut_speed_rpm > 0 AND transfer_speed_rpm > 0`)
    .addCheckConstraint("curve_choices_preset_pair", sql`(preset_id IS NULL) = (preset_version IS NULL)`)
    .execute();
  await sql`ALTER TABLE curve_choices ADD FOREIGN KEY (preset_id, preset_version) REFERENCES curve_preset_versions (preset_id, version)`.execute(
    db,
  );
  await sql`CREATE INDEX curve_choices_side ON curve_choices (side_id, chosen_at DESC)`.execute(db);

  await db.schema
    .createTable("transfers")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("side_id", "uuid", (c) => c.notNull().references("sides.id"))
    .addColumn("object_key", "text", (c) => c.notNull().unique())
    .addColumn("file_name", "text", (c) => c.notNull())
    .addColumn("sha256", "text", (c) => c.notNull())
    .addColumn("bytes", "bigint", (c) => c.notNull())
    .addColumn("container", "text", (c) => c.notNull())
    .addColumn("encoding", "text", (c) => c.notNull())
    .addColumn("bits_per_sample", "integer", (c) => c.notNull())
    .addColumn("channels", "integer", (c) => c.notNull())
    .addColumn("sample_rate_hz", "integer", (c) => c.notNull())
    .addColumn("frames", "bigint", (c) => c.notNull())
    .addColumn("duration_seconds", "double precision", (c) => c.notNull())
    .addColumn("bext", "jsonb")
    .addColumn("stylus_size", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("stylus_shape", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("measured_speed_rpm", sql`numeric(7,3)`)
    .addColumn("chain", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("derived_from", "text")
    .addColumn("uploaded_by", "uuid", (c) => c.notNull().references("users.id"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await sql`CREATE INDEX transfers_side ON transfers (side_id, created_at DESC)`.execute(db);

  await db.schema
    .createTable("renders")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("side_id", "uuid", (c) => c.notNull().references("sides.id"))
    .addColumn("transfer_id", "uuid", (c) => c.notNull().references("transfers.id"))
    .addColumn("curve_choice_id", "uuid", (c) => c.notNull().references("curve_choices.id"))
    .addColumn("status", "text", (c) => c.notNull().defaultTo("queued"))
    .addColumn("progress", "real", (c) => c.notNull().defaultTo(0))
    .addColumn("channel_mode", "text", (c) => c.notNull())
    .addColumn("bit_depth", "integer", (c) => c.notNull())
    .addColumn("object_key", "text")
    .addColumn("sha256", "text")
    .addColumn("bytes", "bigint")
    .addColumn("trim_db", "double precision")
    .addColumn("peak_dbfs", "double precision")
    .addColumn("filter", "jsonb")
    .addColumn("error", "text")
    .addColumn("requested_by", "uuid", (c) => c.notNull().references("users.id"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("started_at", "timestamptz")
    .addColumn("finished_at", "timestamptz")
    .addCheckConstraint("renders_status", sql`status IN ('queued', 'running', 'done', 'failed')`)
    .addCheckConstraint(
      "renders_channel_mode",
      sql`channel_mode IN ('both', 'sum', 'difference', 'left', 'right')`,
    )
    .execute();
  await sql`CREATE INDEX renders_side ON renders (side_id, created_at DESC)`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropTable("renders").execute();
  await db.schema.dropTable("transfers").execute();
  await db.schema.dropTable("curve_choices").execute();
}
