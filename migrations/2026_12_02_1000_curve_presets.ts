import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// A preset is a name; its values live in immutable versions. The preset row points at
// its current version; assignments (later) point at a version, so a curve chosen last
// year still reads as it was.
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable("curve_presets")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("name", "text", (c) => c.notNull())
    .addColumn("current_version", "integer", (c) => c.notNull().defaultTo(1))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await sql`CREATE UNIQUE INDEX curve_presets_name_key ON curve_presets (lower(name))`.execute(db);

  await db.schema
    .createTable("curve_preset_versions")
    .addColumn("preset_id", "uuid", (c) => c.notNull().references("curve_presets.id"))
    .addColumn("version", "integer", (c) => c.notNull())
    .addColumn("name", "text", (c) => c.notNull())
    .addColumn("spec", "jsonb", (c) => c.notNull())
    .addColumn("notes", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("change_note", "text", (c) => c.notNull())
    .addColumn("created_by", "uuid", (c) => c.references("users.id"))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addPrimaryKeyConstraint("curve_preset_versions_pkey", ["preset_id", "version"])
    .execute();

  // Versions are immutable: the database refuses to change or remove one.
  await sql`
    CREATE FUNCTION refuse_preset_version_change() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'curve preset versions are immutable: make a new version instead';
    END $$`.execute(db);
  await sql`
    CREATE TRIGGER curve_preset_versions_immutable BEFORE UPDATE OR DELETE ON curve_preset_versions
    FOR EACH ROW EXECUTE FUNCTION refuse_preset_version_change()`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropTable("curve_preset_versions").execute();
  await sql`DROP FUNCTION refuse_preset_version_change()`.execute(db);
  await db.schema.dropTable("curve_presets").execute();
}
