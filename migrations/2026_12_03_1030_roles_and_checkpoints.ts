import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// Checkpoints anchor the provenance chain outside the database: each is written as its
// own object into the bucket (never overwritten) and mailed to the curators; this table
// is the database's own note of them, append-only like the log itself. Verification
// reads the bucket's copies, not these rows. Each verification run also records which
// checkpoints it checked the chain against.
//
// The roles: from this migration on, migrations run as the owner role and the app
// connects as a role that owns nothing; scripts/migrate.ts grants that role its rights
// after every run (db/roles.ts), so no role name is written here.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("chain_checkpoints")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("object_key", "text", (c) => c.notNull().unique())
    .addColumn("head_seq", "bigint", (c) => c.notNull())
    .addColumn("head_hash", "text", (c) => c.notNull())
    .addColumn("events", "bigint", (c) => c.notNull())
    .addColumn("taken_at", "timestamptz", (c) => c.notNull())
    .addColumn("reason", "text", (c) => c.notNull())
    .addColumn("requested_by", "uuid", (c) => c.references("users.id"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addCheckConstraint("chain_checkpoints_reason", sql`reason IN ('scheduled', 'requested')`)
    .addCheckConstraint("chain_checkpoints_counts", sql`head_seq > 0 AND events > 0`)
    .execute();
  await sql`CREATE INDEX chain_checkpoints_head ON chain_checkpoints (head_seq DESC)`.execute(db);
  await sql`
    CREATE FUNCTION refuse_checkpoint_change() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'chain checkpoints are append-only: % is refused', TG_OP;
    END $$`.execute(db);
  await sql`
    CREATE TRIGGER chain_checkpoints_append_only BEFORE UPDATE OR DELETE ON chain_checkpoints
    FOR EACH ROW EXECUTE FUNCTION refuse_checkpoint_change()`.execute(db);
  await sql`
    CREATE TRIGGER chain_checkpoints_no_truncate BEFORE TRUNCATE ON chain_checkpoints
    FOR EACH STATEMENT EXECUTE FUNCTION refuse_checkpoint_change()`.execute(db);

  await sql`ALTER TABLE chain_checks ADD COLUMN checkpoints integer NOT NULL DEFAULT 0`.execute(db);
  await sql`ALTER TABLE chain_checks ADD COLUMN checkpoint_source text`.execute(db);
  await sql`ALTER TABLE chain_checks ADD COLUMN contradicted_checkpoint text`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE chain_checks DROP COLUMN contradicted_checkpoint, DROP COLUMN checkpoint_source, DROP COLUMN checkpoints`.execute(
    db,
  );
  await db.schema.dropTable("chain_checkpoints").execute();
  await sql`DROP FUNCTION refuse_checkpoint_change()`.execute(db);
}
