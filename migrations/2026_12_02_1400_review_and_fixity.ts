import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// The curator's decisions, fixity checks of every stored object, the record of chain
// verifications, and the lab's settings (the fixity cycle).
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("reviews")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("side_id", "uuid", (c) => c.notNull().references("sides.id"))
    .addColumn("curator_id", "uuid", (c) => c.notNull().references("users.id"))
    .addColumn("decision", "text", (c) => c.notNull())
    .addColumn("reason", "text")
    .addColumn("transfer_id", "uuid", (c) => c.references("transfers.id"))
    .addColumn("render_id", "uuid", (c) => c.references("renders.id"))
    .addColumn("curve_choice_id", "uuid", (c) => c.references("curve_choices.id"))
    .addColumn("decided_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addCheckConstraint("reviews_decision", sql`decision IN ('approved', 'returned')`)
    .addCheckConstraint(
      "reviews_reason",
      sql`decision = 'approved' OR (reason IS NOT NULL AND length(reason) > 0)`,
    )
    .execute();
  await sql`CREATE INDEX reviews_side ON reviews (side_id, decided_at DESC)`.execute(db);

  await db.schema
    .createTable("fixity_checks")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("object_kind", "text", (c) => c.notNull())
    .addColumn("object_id", "uuid", (c) => c.notNull())
    .addColumn("object_key", "text", (c) => c.notNull())
    .addColumn("side_id", "uuid", (c) => c.notNull().references("sides.id"))
    .addColumn("expected_sha256", "text", (c) => c.notNull())
    .addColumn("actual_sha256", "text")
    .addColumn("bytes", "bigint")
    .addColumn("outcome", "text", (c) => c.notNull())
    .addColumn("detail", "text")
    .addColumn("checked_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("acknowledged_by", "uuid", (c) => c.references("users.id"))
    .addColumn("acknowledged_at", "timestamptz")
    .addCheckConstraint("fixity_kind", sql`object_kind IN ('transfer', 'render')`)
    .addCheckConstraint("fixity_outcome", sql`outcome IN ('pass', 'mismatch', 'missing', 'error')`)
    .execute();
  await sql`CREATE INDEX fixity_object ON fixity_checks (object_kind, object_id, checked_at DESC)`.execute(
    db,
  );
  await sql`CREATE INDEX fixity_side ON fixity_checks (side_id, checked_at DESC)`.execute(db);
  await sql`CREATE INDEX fixity_failures ON fixity_checks (checked_at DESC) WHERE outcome <> 'pass'`.execute(
    db,
  );

  await db.schema
    .createTable("chain_checks")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("ok", "boolean", (c) => c.notNull())
    .addColumn("events", "integer", (c) => c.notNull())
    .addColumn("broken_seq", "bigint")
    .addColumn("broken_reason", "text")
    .addColumn("run_by", "uuid", (c) => c.references("users.id"))
    .addColumn("checked_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();

  await db.schema
    .createTable("lab_settings")
    .addColumn("key", "text", (c) => c.primaryKey())
    .addColumn("value", "jsonb", (c) => c.notNull())
    .addColumn("updated_by", "uuid", (c) => c.references("users.id"))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await sql`INSERT INTO lab_settings (key, value) VALUES ('fixity_cycle_days', '30'::jsonb)`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  for (const t of ["lab_settings", "chain_checks", "fixity_checks", "reviews"])
    await db.schema.dropTable(t).execute();
}
