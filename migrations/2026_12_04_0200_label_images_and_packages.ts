import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// Label images: photographs or scans of each side's label and of the sleeve, stored in the
// bucket like transfers (the server makes the key from its own ids) and checked by fixity
// like every stored object. Bag deliveries: BagIt packages a curator asked to be written
// into the delivery prefix (or bucket), each with where it stands.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("label_images")
    .addColumn("id", "uuid", (c) => c.primaryKey())
    .addColumn("disc_id", "uuid", (c) => c.notNull().references("discs.id"))
    /** The side whose label it shows; null for the sleeve. */
    .addColumn("side_id", "uuid", (c) => c.references("sides.id"))
    .addColumn("kind", "text", (c) => c.notNull())
    .addColumn("state", "text", (c) => c.notNull().defaultTo("pending"))
    .addColumn("object_key", "text", (c) => c.notNull().unique())
    .addColumn("thumbnail_key", "text")
    /** The file's name on the archivist's computer, as a record only: never part of a key. */
    .addColumn("file_name", "text", (c) => c.notNull())
    .addColumn("declared_type", "text", (c) => c.notNull())
    .addColumn("declared_bytes", "bigint", (c) => c.notNull())
    /** What the file is, read from its bytes: jpeg, png or tiff. */
    .addColumn("format", "text")
    .addColumn("width", "integer")
    .addColumn("height", "integer")
    .addColumn("bytes", "bigint")
    .addColumn("sha256", "text")
    .addColumn("reason", "text")
    .addColumn("uploaded_by", "uuid", (c) => c.notNull().references("users.id"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("expires_at", "timestamptz", (c) => c.notNull())
    .addColumn("stored_at", "timestamptz")
    .addCheckConstraint("label_images_kind", sql`kind IN ('label', 'sleeve')`)
    .addCheckConstraint("label_images_side", sql`(kind = 'label') = (side_id IS NOT NULL)`)
    .addCheckConstraint("label_images_state", sql`state IN ('pending', 'stored', 'refused')`)
    .addCheckConstraint(
      "label_images_stored",
      sql`(state = 'stored') = (sha256 IS NOT NULL AND bytes IS NOT NULL AND format IS NOT NULL AND thumbnail_key IS NOT NULL AND stored_at IS NOT NULL)`,
    )
    .addCheckConstraint("label_images_format", sql`format IS NULL OR format IN ('jpeg', 'png', 'tiff')`)
    .addCheckConstraint("label_images_bytes", sql`declared_bytes > 0 AND declared_bytes <= 536870912`)
    .addCheckConstraint(
      "label_images_key",
      sql`object_key LIKE 'labels/' || disc_id::text || '/' || id::text || '/%'`,
    )
    .execute();
  await sql`CREATE INDEX label_images_disc ON label_images (disc_id, created_at) WHERE state = 'stored'`.execute(
    db,
  );

  // Fixity of label images: a sleeve belongs to the disc, not to a side.
  await sql`ALTER TABLE fixity_checks ALTER COLUMN side_id DROP NOT NULL`.execute(db);
  await sql`ALTER TABLE fixity_checks ADD COLUMN disc_id uuid REFERENCES discs(id)`.execute(db);
  await sql`ALTER TABLE fixity_checks DROP CONSTRAINT fixity_kind`.execute(db);
  await sql`ALTER TABLE fixity_checks ADD CONSTRAINT fixity_kind CHECK (object_kind IN ('transfer', 'render', 'label_image'))`.execute(
    db,
  );
  await sql`ALTER TABLE fixity_checks ADD CONSTRAINT fixity_owner CHECK (side_id IS NOT NULL OR (object_kind = 'label_image' AND disc_id IS NOT NULL))`.execute(
    db,
  );
  await sql`CREATE INDEX fixity_disc ON fixity_checks (disc_id, checked_at DESC) WHERE disc_id IS NOT NULL`.execute(
    db,
  );

  await db.schema
    .createTable("bag_deliveries")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("scope", "text", (c) => c.notNull())
    .addColumn("disc_id", "uuid", (c) => c.references("discs.id"))
    .addColumn("accession_id", "uuid", (c) => c.references("accessions.id"))
    .addColumn("state", "text", (c) => c.notNull().defaultTo("queued"))
    .addColumn("bucket", "text", (c) => c.notNull())
    /** The bag's folder in the bucket: the delivery prefix, then the bag's name. */
    .addColumn("prefix", "text", (c) => c.notNull())
    .addColumn("payload_oxum", "text")
    .addColumn("tagmanifest_sha256", "text")
    .addColumn("error", "text")
    .addColumn("requested_by", "uuid", (c) => c.notNull().references("users.id"))
    .addColumn("requested_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("started_at", "timestamptz")
    .addColumn("finished_at", "timestamptz")
    .addCheckConstraint("bag_deliveries_scope", sql`scope IN ('disc', 'accession')`)
    .addCheckConstraint(
      "bag_deliveries_subject",
      sql`(scope = 'disc' AND disc_id IS NOT NULL AND accession_id IS NULL) OR (scope = 'accession' AND accession_id IS NOT NULL AND disc_id IS NULL)`,
    )
    .addCheckConstraint("bag_deliveries_state", sql`state IN ('queued', 'running', 'done', 'failed')`)
    .addCheckConstraint("bag_deliveries_done", sql`(state = 'done') = (tagmanifest_sha256 IS NOT NULL)`)
    .execute();
  await sql`CREATE INDEX bag_deliveries_disc ON bag_deliveries (disc_id, requested_at DESC)`.execute(db);
  await sql`CREATE INDEX bag_deliveries_accession ON bag_deliveries (accession_id, requested_at DESC)`.execute(
    db,
  );
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropTable("bag_deliveries").execute();
  await sql`DELETE FROM fixity_checks WHERE object_kind = 'label_image'`.execute(db);
  await sql`DROP INDEX fixity_disc`.execute(db);
  await sql`ALTER TABLE fixity_checks DROP CONSTRAINT fixity_owner`.execute(db);
  await sql`ALTER TABLE fixity_checks DROP CONSTRAINT fixity_kind`.execute(db);
  await sql`ALTER TABLE fixity_checks ADD CONSTRAINT fixity_kind CHECK (object_kind IN ('transfer', 'render'))`.execute(
    db,
  );
  await sql`ALTER TABLE fixity_checks DROP COLUMN disc_id`.execute(db);
  await sql`ALTER TABLE fixity_checks ALTER COLUMN side_id SET NOT NULL`.execute(db);
  await db.schema.dropTable("label_images").execute();
}
