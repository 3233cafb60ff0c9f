import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// The equipment register: the lab's playback and capture items, the chains they are saved
// in, the calibrations of those chains, findings against items, and the items each flat
// transfer was actually made with (a snapshot row per item, never changed afterwards).
export async function up(db: Kysely<unknown>): Promise<void> {
  await sql`
    CREATE TABLE equipment_items (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      kind text NOT NULL CONSTRAINT equipment_items_kind CHECK (
        kind IN ('turntable', 'tonearm', 'cartridge', 'stylus', 'preamplifier', 'converter', 'other')),
      make text NOT NULL CONSTRAINT equipment_items_make CHECK (length(btrim(make)) BETWEEN 1 AND 200),
      model text NOT NULL DEFAULT '' CONSTRAINT equipment_items_model CHECK (length(model) <= 200),
      serial text NOT NULL DEFAULT '' CONSTRAINT equipment_items_serial CHECK (length(serial) <= 120),
      in_service_on date,
      out_of_service_on date,
      -- A stylus's tip: kept in micrometres (the mil is shown beside it: 1 mil = 25.4 µm).
      stylus_tip_um numeric(8, 3),
      stylus_shape text,
      notes text NOT NULL DEFAULT '',
      version integer NOT NULL DEFAULT 1,
      created_by uuid REFERENCES users(id),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      CONSTRAINT equipment_items_service_dates CHECK (
        out_of_service_on IS NULL OR in_service_on IS NULL OR out_of_service_on >= in_service_on),
      CONSTRAINT equipment_items_stylus_fields CHECK (
        kind = 'stylus' OR (stylus_tip_um IS NULL AND stylus_shape IS NULL)),
      CONSTRAINT equipment_items_stylus_tip CHECK (
        stylus_tip_um IS NULL OR (stylus_tip_um > 0 AND stylus_tip_um < 500)),
      -- Lets chains and transfers name an item with its kind, so the database checks the kind too.
      CONSTRAINT equipment_items_id_kind UNIQUE (id, kind)
    )`.execute(db);

  await sql`
    CREATE TABLE equipment_chains (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      name text NOT NULL CONSTRAINT equipment_chains_name CHECK (length(btrim(name)) BETWEEN 1 AND 120),
      notes text NOT NULL DEFAULT '',
      retired_at timestamptz,
      version integer NOT NULL DEFAULT 1,
      created_by uuid REFERENCES users(id),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    )`.execute(db);
  await sql`CREATE UNIQUE INDEX equipment_chains_name_unique ON equipment_chains (lower(name))`.execute(db);

  await sql`
    CREATE TABLE equipment_chain_items (
      chain_id uuid NOT NULL REFERENCES equipment_chains(id) ON DELETE CASCADE,
      item_id uuid NOT NULL,
      kind text NOT NULL,
      PRIMARY KEY (chain_id, item_id),
      FOREIGN KEY (item_id, kind) REFERENCES equipment_items(id, kind)
    )`.execute(db);
  // At most one item of each kind in a chain, except "other".
  await sql`
    CREATE UNIQUE INDEX equipment_chain_items_one_per_kind ON equipment_chain_items (chain_id, kind)
    WHERE kind <> 'other'`.execute(db);
  await sql`CREATE INDEX equipment_chain_items_item ON equipment_chain_items (item_id)`.execute(db);

  await sql`ALTER TABLE transfers ADD COLUMN equipment_chain_id uuid REFERENCES equipment_chains(id)`.execute(
    db,
  );

  // The items a transfer was made with, as they stood in the register that day.
  await sql`
    CREATE TABLE transfer_equipment (
      transfer_id uuid NOT NULL REFERENCES transfers(id),
      item_id uuid NOT NULL,
      kind text NOT NULL,
      make text NOT NULL,
      model text NOT NULL,
      serial text NOT NULL,
      stylus_tip_um numeric(8, 3),
      stylus_shape text,
      -- True for the one item swapped in for this transfer in place of the chain's own.
      swapped boolean NOT NULL DEFAULT false,
      PRIMARY KEY (transfer_id, item_id),
      FOREIGN KEY (item_id, kind) REFERENCES equipment_items(id, kind),
      CONSTRAINT transfer_equipment_stylus_fields CHECK (
        kind = 'stylus' OR (stylus_tip_um IS NULL AND stylus_shape IS NULL))
    )`.execute(db);
  await sql`
    CREATE UNIQUE INDEX transfer_equipment_one_per_kind ON transfer_equipment (transfer_id, kind)
    WHERE kind <> 'other'`.execute(db);
  await sql`CREATE UNIQUE INDEX transfer_equipment_one_swap ON transfer_equipment (transfer_id) WHERE swapped`.execute(
    db,
  );
  await sql`CREATE INDEX transfer_equipment_item ON transfer_equipment (item_id)`.execute(db);
  await sql`
    CREATE FUNCTION refuse_transfer_equipment_change() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'transfer_equipment is a record of what a transfer was made with: rows are never changed';
    END $$`.execute(db);
  await sql`
    CREATE TRIGGER transfer_equipment_append_only BEFORE UPDATE OR DELETE ON transfer_equipment
    FOR EACH ROW EXECUTE FUNCTION refuse_transfer_equipment_change()`.execute(db);

  await sql`
    CREATE TABLE equipment_calibrations (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      chain_id uuid NOT NULL REFERENCES equipment_chains(id),
      calibrated_on date NOT NULL,
      test_disc text NOT NULL CONSTRAINT equipment_calibrations_test_disc CHECK (length(btrim(test_disc)) BETWEEN 1 AND 200),
      -- The items the chain held when it was measured.
      item_ids uuid[] NOT NULL,
      expected_name text NOT NULL,
      expected_preset_id uuid REFERENCES curve_presets(id),
      expected_preset_version integer,
      expected_spec jsonb NOT NULL,
      points jsonb NOT NULL CONSTRAINT equipment_calibrations_points CHECK (
        jsonb_typeof(points) = 'array' AND jsonb_array_length(points) >= 3),
      points_kind text NOT NULL CONSTRAINT equipment_calibrations_points_kind CHECK (points_kind IN ('recording', 'playback')),
      fit_parameters text[] NOT NULL,
      fitted_spec jsonb NOT NULL,
      fit_rms_db double precision NOT NULL,
      -- The points against the expected curve (only the level aligned): what the chain adds.
      deviation_rms_db double precision NOT NULL,
      deviation_worst_db double precision NOT NULL,
      deviation_worst_hz double precision NOT NULL,
      notes text NOT NULL DEFAULT '',
      recorded_by uuid NOT NULL REFERENCES users(id),
      created_at timestamptz NOT NULL DEFAULT now(),
      CONSTRAINT equipment_calibrations_preset CHECK (
        (expected_preset_id IS NULL) = (expected_preset_version IS NULL))
    )`.execute(db);
  await sql`CREATE INDEX equipment_calibrations_chain ON equipment_calibrations (chain_id, calibrated_on DESC)`.execute(
    db,
  );
  await sql`
    CREATE FUNCTION refuse_equipment_calibration_change() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'a calibration is a measurement on record: it is never changed; record a new one';
    END $$`.execute(db);
  await sql`
    CREATE TRIGGER equipment_calibrations_append_only BEFORE UPDATE OR DELETE ON equipment_calibrations
    FOR EACH ROW EXECUTE FUNCTION refuse_equipment_calibration_change()`.execute(db);

  await sql`
    CREATE TABLE equipment_findings (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      item_id uuid NOT NULL REFERENCES equipment_items(id),
      found_on date NOT NULL,
      -- "fault": something wrong was found; "good": an inspection found the item sound.
      outcome text NOT NULL CONSTRAINT equipment_findings_outcome CHECK (outcome IN ('fault', 'good')),
      description text NOT NULL CONSTRAINT equipment_findings_description CHECK (length(btrim(description)) BETWEEN 1 AND 4000),
      recorded_by uuid NOT NULL REFERENCES users(id),
      created_at timestamptz NOT NULL DEFAULT now()
    )`.execute(db);
  await sql`CREATE INDEX equipment_findings_item ON equipment_findings (item_id, found_on DESC)`.execute(db);
  await sql`
    CREATE FUNCTION refuse_equipment_finding_change() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      RAISE EXCEPTION 'a finding is on record: it is never changed; record a new one';
    END $$`.execute(db);
  await sql`
    CREATE TRIGGER equipment_findings_append_only BEFORE UPDATE OR DELETE ON equipment_findings
    FOR EACH ROW EXECUTE FUNCTION refuse_equipment_finding_change()`.execute(db);
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await sql`DROP TABLE equipment_findings`.execute(db);
  await sql`DROP FUNCTION refuse_equipment_finding_change()`.execute(db);
  await sql`DROP TABLE equipment_calibrations`.execute(db);
  await sql`DROP FUNCTION refuse_equipment_calibration_change()`.execute(db);
  await sql`DROP TABLE transfer_equipment`.execute(db);
  await sql`DROP FUNCTION refuse_transfer_equipment_change()`.execute(db);
  await sql`ALTER TABLE transfers DROP COLUMN equipment_chain_id`.execute(db);
  await sql`DROP TABLE equipment_chain_items`.execute(db);
  await sql`DROP TABLE equipment_chains`.execute(db);
  await sql`DROP TABLE equipment_items`.execute(db);
}
