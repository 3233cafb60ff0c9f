import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// Each upload of a flat transfer is started, remembered and finished by the server: the
// side and person it belongs to, the object key the server made, the storage's upload
// id, the size declared at the start, and where it stands. The client names an upload
// by its id only; it never names a key. A transfer comes from at most one upload, and
// its side and object are that upload's own.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("uploads")
    .addColumn("id", "uuid", (c) => c.primaryKey())
    .addColumn("side_id", "uuid", (c) => c.notNull().references("sides.id"))
    .addColumn("started_by", "uuid", (c) => c.notNull().references("users.id"))
    .addColumn("object_key", "text", (c) => c.notNull().unique())
    .addColumn("storage_upload_id", "text", (c) => c.notNull())
    /** The file's name on the engineer's computer, as a record only: never part of a key. */
    .addColumn("file_name", "text", (c) => c.notNull())
    .addColumn("declared_bytes", "bigint", (c) => c.notNull())
    .addColumn("part_size", "bigint", (c) => c.notNull())
    .addColumn("part_count", "integer", (c) => c.notNull())
    .addColumn("state", "text", (c) => c.notNull().defaultTo("open"))
    /** The completion attempt that holds the upload while its file is checked. */
    .addColumn("claim", "uuid")
    .addColumn("claimed_at", "timestamptz")
    /** Why it was refused or aborted, for the record. */
    .addColumn("reason", "text")
    .addColumn("expires_at", "timestamptz", (c) => c.notNull())
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("finished_at", "timestamptz")
    .addCheckConstraint(
      "uploads_state",
      sql`state IN ('open', 'completing', 'completed', 'aborted', 'refused')`,
    )
    // S3: 10 000 parts at most; files up to 64 GiB here.
    .addCheckConstraint("uploads_declared_bytes", sql`declared_bytes > 0 AND declared_bytes <= 68719476736`)
    .addCheckConstraint(
      "uploads_parts",
      sql`part_size > 0 AND part_count BETWEEN 1 AND 10000 AND part_count = (declared_bytes + part_size - 1) / part_size`,
    )
    .addCheckConstraint(
      "uploads_claim",
      sql`(state = 'completing') = (claim IS NOT NULL AND claimed_at IS NOT NULL)`,
    )
    .addCheckConstraint("uploads_finished", sql`(state IN ('open', 'completing')) = (finished_at IS NULL)`)
    .addCheckConstraint("uploads_expiry", sql`expires_at > created_at`)
    .addCheckConstraint(
      "uploads_key",
      sql`object_key LIKE 'transfers/' || side_id::text || '/' || id::text || '/%'`,
    )
    .execute();
  // The target of the transfers' foreign key below: a transfer's side and object are its upload's.
  await sql`ALTER TABLE uploads ADD CONSTRAINT uploads_id_side_key UNIQUE (id, side_id, object_key)`.execute(
    db,
  );
  await sql`CREATE INDEX uploads_started_by ON uploads (started_by, state)`.execute(db);
  await sql`CREATE INDEX uploads_open_expiry ON uploads (expires_at) WHERE state IN ('open', 'completing')`.execute(
    db,
  );

  // Transfers recorded before uploads were remembered keep a null upload_id.
  await sql`ALTER TABLE transfers ADD COLUMN upload_id uuid`.execute(db);
  await sql`ALTER TABLE transfers ADD CONSTRAINT transfers_upload_once UNIQUE (upload_id)`.execute(db);
  await sql`ALTER TABLE transfers ADD CONSTRAINT transfers_upload_fk FOREIGN KEY (upload_id, side_id, object_key) REFERENCES uploads (id, side_id, object_key)`.execute(
    db,
  );
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE transfers DROP CONSTRAINT transfers_upload_fk`.execute(db);
  await sql`ALTER TABLE transfers DROP COLUMN upload_id`.execute(db);
  await db.schema.dropTable("uploads").execute();
}
