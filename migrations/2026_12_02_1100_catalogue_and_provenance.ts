import { createHash } from "node:crypto";
import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code. The canonical form of an event below must stay
// identical to lib/provenance/chain.ts (version 1 of the chain's canonical form).

function canonicalJson(value: unknown): string {
  if (value === null || typeof value !== "object") return JSON.stringify(value ?? null);
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(",")}]`;
  const entries = Object.entries(value as Record<string, unknown>)
    .filter(([, v]) => v !== undefined)
    .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
  return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(",")}}`;
}

const genesis = "0".repeat(64);

export async function up(db: Kysely<any>): Promise<void> {
  await sql`CREATE EXTENSION IF NOT EXISTS pg_trgm`.execute(db);

  await db.schema
    .createTable("accessions")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("identifier", "text", (c) => c.notNull())
    .addColumn("source", "text", (c) => c.notNull())
    .addColumn("received_on", "date", (c) => c.notNull())
    .addColumn("notes", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await sql`CREATE UNIQUE INDEX accessions_identifier_key ON accessions (lower(identifier))`.execute(db);

  await db.schema
    .createTable("discs")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("accession_id", "uuid", (c) => c.notNull().references("accessions.id"))
    .addColumn("shelf_mark", "text", (c) => c.notNull())
    .addColumn("label_name", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("catalogue_number", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("format", "text", (c) => c.notNull())
    .addColumn("base", "text")
    .addColumn("diameter_in", sql`numeric(4,1)`)
    .addColumn("nominal_speed_rpm", sql`numeric(6,2)`, (c) => c.notNull())
    .addColumn("groove", "text", (c) => c.notNull())
    .addColumn("cut", "text", (c) => c.notNull())
    .addColumn("recording_date", "date")
    .addColumn("recorded_from_year", "integer")
    .addColumn("recorded_to_year", "integer")
    .addColumn("condition_grade", "text", (c) => c.notNull().defaultTo("unassessed"))
    .addColumn("condition_flags", sql`text[]`, (c) => c.notNull().defaultTo(sql`'{}'`))
    .addColumn("condition_notes", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("handling_notes", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("version", "integer", (c) => c.notNull().defaultTo(1))
    .addColumn("search_tsv", sql`tsvector`, (c) => c.notNull().defaultTo(sql`''::tsvector`))
    .addColumn("search_codes", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addCheckConstraint(
      "discs_format",
      sql`format IN ('shellac_78', 'instantaneous_lacquer', 'transcription', 'vinyl_78', 'microgroove_lp', 'other')`,
    )
    .addCheckConstraint("discs_base", sql`base IS NULL OR base IN ('aluminium', 'glass', 'card', 'unknown')`)
    .addCheckConstraint("discs_groove", sql`groove IN ('coarse', 'micro')`)
    .addCheckConstraint("discs_cut", sql`cut IN ('lateral', 'vertical')`)
    .addCheckConstraint("discs_speed_positive", sql`nominal_speed_rpm > 0`)
    .addCheckConstraint("discs_diameter_positive", sql`diameter_in IS NULL OR diameter_in > 0`)
    .addCheckConstraint(
      "discs_years_ordered",
      sql`recorded_from_year IS NULL OR recorded_to_year IS NULL OR recorded_from_year <= recorded_to_year`,
    )
    .addCheckConstraint(
      "discs_condition_grade",
      sql`condition_grade IN ('unassessed', 'excellent', 'good', 'fair', 'poor', 'unplayable')`,
    )
    .execute();
  await sql`CREATE UNIQUE INDEX discs_shelf_mark_key ON discs (lower(shelf_mark))`.execute(db);
  await sql`CREATE INDEX discs_accession ON discs (accession_id)`.execute(db);
  await sql`CREATE INDEX discs_format ON discs (format)`.execute(db);
  await sql`CREATE INDEX discs_speed ON discs (nominal_speed_rpm)`.execute(db);
  await sql`CREATE INDEX discs_updated ON discs (updated_at DESC)`.execute(db);
  await sql`CREATE INDEX discs_label ON discs (label_name)`.execute(db);
  await sql`CREATE INDEX discs_catalogue_number ON discs (catalogue_number)`.execute(db);
  await sql`CREATE INDEX discs_search_tsv ON discs USING gin (search_tsv)`.execute(db);
  await sql`CREATE INDEX discs_search_codes ON discs USING gin (search_codes gin_trgm_ops)`.execute(db);

  await db.schema
    .createTable("sides")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("disc_id", "uuid", (c) => c.notNull().references("discs.id").onDelete("cascade"))
    .addColumn("designation", "text", (c) => c.notNull())
    .addColumn("matrix_number", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("take", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("title", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("performers", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("notes", "text", (c) => c.notNull().defaultTo(""))
    .addColumn("status", "text", (c) => c.notNull().defaultTo("catalogued"))
    .addColumn("assigned_engineer_id", "uuid", (c) => c.references("users.id"))
    .addColumn("return_reason", "text")
    .addColumn("version", "integer", (c) => c.notNull().defaultTo(1))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addCheckConstraint(
      "sides_status",
      sql`status IN ('catalogued', 'assigned', 'curve_chosen', 'transferred', 'rendered', 'in_review', 'approved', 'returned')`,
    )
    .execute();
  await sql`CREATE UNIQUE INDEX sides_disc_designation ON sides (disc_id, lower(designation))`.execute(db);
  await sql`CREATE INDEX sides_status ON sides (status, disc_id)`.execute(db);
  await sql`CREATE INDEX sides_engineer ON sides (assigned_engineer_id, disc_id)`.execute(db);

  // The lab's permanent record: append-only, hash-chained.
  await db.schema
    .createTable("provenance_events")
    .addColumn("seq", "bigserial", (c) => c.primaryKey())
    .addColumn("id", "uuid", (c) =>
      c
        .notNull()
        .unique()
        .defaultTo(sql`gen_random_uuid()`),
    )
    .addColumn("at", "timestamptz", (c) => c.notNull())
    .addColumn("actor_id", "uuid", (c) => c.references("users.id"))
    .addColumn("kind", "text", (c) => c.notNull())
    .addColumn("subject_type", "text", (c) => c.notNull())
    .addColumn("subject_id", "text")
    .addColumn("disc_id", "uuid")
    .addColumn("payload", "jsonb", (c) => c.notNull())
    .addColumn("prev_hash", "text", (c) => c.notNull())
    .addColumn("hash", "text", (c) => c.notNull().unique())
    .execute();
  await sql`CREATE INDEX provenance_disc ON provenance_events (disc_id, seq)`.execute(db);
  await sql`CREATE INDEX provenance_subject ON provenance_events (subject_type, subject_id, seq)`.execute(db);
  await sql`CREATE INDEX provenance_kind ON provenance_events (kind, seq)`.execute(db);
  await sql`
    CREATE FUNCTION refuse_provenance_change() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'the provenance log is append-only: % is refused', TG_OP;
    END $$`.execute(db);
  await sql`
    CREATE TRIGGER provenance_append_only BEFORE UPDATE OR DELETE ON provenance_events
    FOR EACH ROW EXECUTE FUNCTION refuse_provenance_change()`.execute(db);
  await sql`
    CREATE TRIGGER provenance_no_truncate BEFORE TRUNCATE ON provenance_events
    FOR EACH STATEMENT EXECUTE FUNCTION refuse_provenance_change()`.execute(db);

  // Fold the foundation's people changes into the log, oldest first, then retire the table.
  const { rows } = await sql<{
    id: string;
    actor_id: string | null;
    subject_user_id: string | null;
    subject_email: string;
    kind: string;
    detail: Record<string, unknown>;
    at: Date;
  }>`
    SELECT id, actor_id, subject_user_id, subject_email, kind, detail, at FROM people_changes ORDER BY at, id`.execute(
    db,
  );
  let prev = genesis;
  for (const r of rows) {
    const event = {
      id: r.id,
      at: new Date(r.at).toISOString(),
      actorId: r.actor_id,
      kind: `person.${r.kind}`,
      subjectType: "person",
      subjectId: r.subject_user_id ?? r.subject_email,
      discId: null,
      payload: { email: r.subject_email, ...r.detail },
    };
    const hash = createHash("sha256")
      .update(`${prev}\n${canonicalJson(event)}`, "utf8")
      .digest("hex");
    await sql`
      INSERT INTO provenance_events (id, at, actor_id, kind, subject_type, subject_id, disc_id, payload, prev_hash, hash)
      VALUES (${event.id}, ${event.at}, ${event.actorId}, ${event.kind}, ${event.subjectType}, ${event.subjectId}, NULL, ${JSON.stringify(event.payload)}::jsonb, ${prev}, ${hash})`.execute(
      db,
    );
    prev = hash;
  }
  await db.schema.dropTable("people_changes").execute();
}

// eslint-disable-next-line @typescript-eslint/require-await -- a migration answers a promise; this one only refuses
export async function down(): Promise<void> {
  throw new Error("the provenance log cannot be rolled back");
}
