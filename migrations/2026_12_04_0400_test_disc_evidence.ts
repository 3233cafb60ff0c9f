import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// A curve choice that rests on a test-disc measurement keeps the measurement as its
// evidence: the measured (Hz, dB) points, the parameters fitted, the fitted curve and its
// residuals (worked out by the server), and the points file as it was uploaded, with its
// SHA-256. Only a choice whose evidence is a test disc may have it (a foreign key over
// the choice's id and evidence kind), at most one per choice, and it never changes.
export async function up(db: Kysely<unknown>): Promise<void> {
  await sql`ALTER TABLE curve_choices ADD CONSTRAINT curve_choices_id_evidence_kind UNIQUE (id, evidence_kind)`.execute(
    db,
  );
  await sql`
    CREATE TABLE curve_choice_evidence (
      choice_id uuid PRIMARY KEY,
      evidence_kind text NOT NULL DEFAULT 'test_disc' CHECK (evidence_kind = 'test_disc'),
      -- What the points are: the disc's recording characteristic or the playback curve that flattens it.
      points_kind text NOT NULL CHECK (points_kind IN ('recording', 'playback')),
      points jsonb NOT NULL CHECK (jsonb_typeof(points) = 'array' AND jsonb_array_length(points) BETWEEN 2 AND 5000),
      fit_parameters text[] NOT NULL CHECK (cardinality(fit_parameters) >= 1),
      fitted_spec jsonb NOT NULL,
      level_offset_db double precision NOT NULL,
      residuals jsonb NOT NULL CHECK (jsonb_typeof(residuals) = 'array'),
      rms_db double precision NOT NULL CHECK (rms_db >= 0),
      worst_db double precision NOT NULL,
      worst_hz double precision NOT NULL CHECK (worst_hz > 0),
      source_file_name text CHECK (length(source_file_name) BETWEEN 1 AND 255),
      source_text text CHECK (octet_length(source_text) <= 1048576),
      source_sha256 text CHECK (source_sha256 ~ '^[0-9a-f]{64}$'),
      created_at timestamptz NOT NULL DEFAULT now(),
      CHECK ((source_text IS NULL) = (source_sha256 IS NULL)),
      CHECK (source_file_name IS NULL OR source_text IS NOT NULL),
      FOREIGN KEY (choice_id, evidence_kind) REFERENCES curve_choices (id, evidence_kind)
    )`.execute(db);
  // Evidence is part of the record: the database refuses to change or remove it.
  await sql`
    CREATE FUNCTION refuse_choice_evidence_change() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'a curve choice''s evidence is immutable: make a new choice instead';
    END $$`.execute(db);
  await sql`
    CREATE TRIGGER curve_choice_evidence_immutable BEFORE UPDATE OR DELETE ON curve_choice_evidence
    FOR EACH ROW EXECUTE FUNCTION refuse_choice_evidence_change()`.execute(db);
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await sql`DROP TABLE curve_choice_evidence`.execute(db);
  await sql`DROP FUNCTION refuse_choice_evidence_change()`.execute(db);
  await sql`ALTER TABLE curve_choices DROP CONSTRAINT curve_choices_id_evidence_kind`.execute(db);
}
