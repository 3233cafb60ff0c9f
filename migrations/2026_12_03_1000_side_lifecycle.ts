import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// One side lifecycle, held by the database as well as by lib/sides:
// - each side names its current flat transfer, curve choice and access copy (render);
// - the current render must have been made from the current transfer and choice;
// - a status must have what it stands on (a rendered side has a current render, …);
// - a status changes only along the steps in side_transitions (the same table as
//   lib/sides/lifecycle.ts, checked by a test);
// - a review names a transfer, a curve choice and a render made from exactly those
//   two, with the SHA-256s it approved; an approval names the side's current triple.
// Order of the work: assigned → flat transfer accepted ("transferred") → curve chosen →
// rendered → in review → approved or returned.

const steps: [string, string][] = [
  ["catalogued", "assigned"],
  ["returned", "assigned"],
  ["assigned", "transferred"],
  ["returned", "transferred"],
  ["transferred", "curve_chosen"],
  ["returned", "curve_chosen"],
  ["rendered", "curve_chosen"],
  ["curve_chosen", "rendered"],
  ["returned", "rendered"],
  ["rendered", "in_review"],
  ["in_review", "approved"],
  ["in_review", "returned"],
];

export async function up(db: Kysely<any>): Promise<void> {
  // Pairs that let composite foreign keys say "this row belongs to that side / was made from those".
  await sql`ALTER TABLE transfers ADD CONSTRAINT transfers_id_side UNIQUE (id, side_id)`.execute(db);
  await sql`ALTER TABLE transfers ADD CONSTRAINT transfers_id_sha UNIQUE (id, sha256)`.execute(db);
  await sql`ALTER TABLE curve_choices ADD CONSTRAINT curve_choices_id_side UNIQUE (id, side_id)`.execute(db);
  await sql`ALTER TABLE curve_choices ADD COLUMN spec_sha256 text`.execute(db);
  // The spec's SHA-256 as the app computes it (canonical JSON, keys sorted); for rows
  // made before this migration, of the stored jsonb text, which is what they had.
  await sql`UPDATE curve_choices SET spec_sha256 = encode(sha256(convert_to(spec::text, 'UTF8')), 'hex')`.execute(
    db,
  );
  await sql`ALTER TABLE curve_choices ALTER COLUMN spec_sha256 SET NOT NULL`.execute(db);
  await sql`ALTER TABLE curve_choices ADD CONSTRAINT curve_choices_id_sha UNIQUE (id, spec_sha256)`.execute(
    db,
  );
  await sql`ALTER TABLE renders ADD CONSTRAINT renders_id_side UNIQUE (id, side_id)`.execute(db);
  await sql`ALTER TABLE renders ADD CONSTRAINT renders_id_made_from UNIQUE (id, transfer_id, curve_choice_id)`.execute(
    db,
  );
  await sql`ALTER TABLE renders ADD CONSTRAINT renders_id_sha UNIQUE (id, sha256)`.execute(db);
  await sql`ALTER TABLE renders ADD CONSTRAINT renders_transfer_of_side FOREIGN KEY (transfer_id, side_id) REFERENCES transfers (id, side_id)`.execute(
    db,
  );
  await sql`ALTER TABLE renders ADD CONSTRAINT renders_choice_of_side FOREIGN KEY (curve_choice_id, side_id) REFERENCES curve_choices (id, side_id)`.execute(
    db,
  );

  // Superseded renders stay with their files and hashes, marked and never offered as the access copy.
  await sql`ALTER TABLE renders ADD COLUMN superseded_at timestamptz, ADD COLUMN superseded_reason text`.execute(
    db,
  );
  await sql`ALTER TABLE renders ADD CONSTRAINT renders_superseded_reason CHECK ((superseded_at IS NULL) = (superseded_reason IS NULL))`.execute(
    db,
  );

  await sql`
    ALTER TABLE sides
      ADD COLUMN current_transfer_id uuid,
      ADD COLUMN current_curve_choice_id uuid,
      ADD COLUMN current_render_id uuid`.execute(db);

  // What each side stands on now, from what was there: the newest transfer and choice,
  // and the newest finished render made from exactly those two.
  await sql`
    UPDATE sides s SET
      current_transfer_id = (SELECT t.id FROM transfers t WHERE t.side_id = s.id ORDER BY t.created_at DESC LIMIT 1),
      current_curve_choice_id = (SELECT c.id FROM curve_choices c WHERE c.side_id = s.id ORDER BY c.chosen_at DESC LIMIT 1)`.execute(
    db,
  );
  await sql`
    UPDATE sides s SET current_render_id = (
      SELECT r.id FROM renders r
      WHERE r.side_id = s.id AND r.status = 'done' AND r.transfer_id = s.current_transfer_id AND r.curve_choice_id = s.current_curve_choice_id
      ORDER BY r.finished_at DESC LIMIT 1)`.execute(db);
  await sql`
    UPDATE renders r SET superseded_at = now(), superseded_reason = 'made from a transfer or curve that is no longer the side''s current one'
    WHERE NOT EXISTS (SELECT 1 FROM sides s WHERE s.current_render_id = r.id)
      AND r.status IN ('done', 'queued', 'running')`.execute(db);
  // Statuses in the new order: a curve recorded before any transfer leaves the side assigned;
  // a transfer with a curve is "curve chosen"; a side without the render it claims needs one.
  await sql`UPDATE sides SET status = 'assigned' WHERE status = 'curve_chosen' AND current_transfer_id IS NULL`.execute(
    db,
  );
  await sql`UPDATE sides SET status = 'curve_chosen' WHERE status = 'transferred' AND current_curve_choice_id IS NOT NULL`.execute(
    db,
  );
  await sql`UPDATE sides SET status = 'curve_chosen' WHERE status IN ('rendered', 'in_review') AND current_render_id IS NULL AND current_transfer_id IS NOT NULL AND current_curve_choice_id IS NOT NULL`.execute(
    db,
  );

  await sql`ALTER TABLE sides ADD CONSTRAINT sides_current_transfer FOREIGN KEY (current_transfer_id, id) REFERENCES transfers (id, side_id)`.execute(
    db,
  );
  await sql`ALTER TABLE sides ADD CONSTRAINT sides_current_choice FOREIGN KEY (current_curve_choice_id, id) REFERENCES curve_choices (id, side_id)`.execute(
    db,
  );
  // The current render was made from the current transfer and the current choice.
  await sql`ALTER TABLE sides ADD CONSTRAINT sides_current_render FOREIGN KEY (current_render_id, current_transfer_id, current_curve_choice_id) REFERENCES renders (id, transfer_id, curve_choice_id)`.execute(
    db,
  );
  await sql`
    ALTER TABLE sides ADD CONSTRAINT sides_status_has_its_work CHECK (
      (current_render_id IS NULL OR (current_transfer_id IS NOT NULL AND current_curve_choice_id IS NOT NULL))
      AND (status NOT IN ('transferred', 'curve_chosen', 'rendered', 'in_review', 'approved') OR current_transfer_id IS NOT NULL)
      AND (status NOT IN ('curve_chosen', 'rendered', 'in_review', 'approved') OR current_curve_choice_id IS NOT NULL)
      AND (status NOT IN ('rendered', 'in_review', 'approved') OR current_render_id IS NOT NULL)
      AND (status NOT IN ('catalogued', 'assigned', 'transferred', 'curve_chosen') OR current_render_id IS NULL)
    ) NOT VALID`.execute(db);
  await sql`
    DO $$ BEGIN
      ALTER TABLE sides VALIDATE CONSTRAINT sides_status_has_its_work;
    EXCEPTION WHEN check_violation THEN
      RAISE WARNING 'some sides stand in a status without the work it needs; new changes are checked, old rows are left as they were';
    END $$`.execute(db);

  // The steps a status may take, and the trigger that holds every UPDATE to them.
  await sql`CREATE TABLE side_transitions (from_status text NOT NULL, to_status text NOT NULL, PRIMARY KEY (from_status, to_status))`.execute(
    db,
  );
  for (const [from, to] of steps) await sql`INSERT INTO side_transitions VALUES (${from}, ${to})`.execute(db);
  await sql`
    CREATE FUNCTION sides_status_step() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF NOT EXISTS (SELECT 1 FROM side_transitions WHERE from_status = OLD.status AND to_status = NEW.status) THEN
        RAISE EXCEPTION 'a side cannot go from % to %', OLD.status, NEW.status USING ERRCODE = 'check_violation';
      END IF;
      RETURN NEW;
    END $$`.execute(db);
  await sql`CREATE TRIGGER sides_status_step BEFORE UPDATE OF status ON sides FOR EACH ROW WHEN (OLD.status IS DISTINCT FROM NEW.status) EXECUTE FUNCTION sides_status_step()`.execute(
    db,
  );
  await sql`
    CREATE FUNCTION sides_new_status() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF NEW.status <> 'catalogued' THEN
        RAISE EXCEPTION 'a new side starts catalogued, not %', NEW.status USING ERRCODE = 'check_violation';
      END IF;
      RETURN NEW;
    END $$`.execute(db);
  await sql`CREATE TRIGGER sides_new_status BEFORE INSERT ON sides FOR EACH ROW EXECUTE FUNCTION sides_new_status()`.execute(
    db,
  );

  // Reviews bind the triple, with the SHA-256s the curator saw.
  await sql`ALTER TABLE reviews ADD COLUMN transfer_sha256 text, ADD COLUMN render_sha256 text, ADD COLUMN curve_spec_sha256 text`.execute(
    db,
  );
  await sql`UPDATE reviews v SET transfer_sha256 = t.sha256 FROM transfers t WHERE t.id = v.transfer_id`.execute(
    db,
  );
  await sql`UPDATE reviews v SET render_sha256 = r.sha256 FROM renders r WHERE r.id = v.render_id`.execute(
    db,
  );
  await sql`UPDATE reviews v SET curve_spec_sha256 = c.spec_sha256 FROM curve_choices c WHERE c.id = v.curve_choice_id`.execute(
    db,
  );
  // An older approval that named mismatched work cannot be mended; new rows are checked.
  const checks: [string, string][] = [
    [
      "reviews_render_made_from",
      "FOREIGN KEY (render_id, transfer_id, curve_choice_id) REFERENCES renders (id, transfer_id, curve_choice_id)",
    ],
    ["reviews_render_of_side", "FOREIGN KEY (render_id, side_id) REFERENCES renders (id, side_id)"],
    ["reviews_transfer_of_side", "FOREIGN KEY (transfer_id, side_id) REFERENCES transfers (id, side_id)"],
    [
      "reviews_choice_of_side",
      "FOREIGN KEY (curve_choice_id, side_id) REFERENCES curve_choices (id, side_id)",
    ],
    ["reviews_transfer_sha", "FOREIGN KEY (transfer_id, transfer_sha256) REFERENCES transfers (id, sha256)"],
    ["reviews_render_sha", "FOREIGN KEY (render_id, render_sha256) REFERENCES renders (id, sha256)"],
    [
      "reviews_choice_sha",
      "FOREIGN KEY (curve_choice_id, curve_spec_sha256) REFERENCES curve_choices (id, spec_sha256)",
    ],
    [
      "reviews_approval_names_all",
      `CHECK (decision <> 'approved' OR (transfer_id IS NOT NULL AND render_id IS NOT NULL AND curve_choice_id IS NOT NULL
        AND transfer_sha256 IS NOT NULL AND render_sha256 IS NOT NULL AND curve_spec_sha256 IS NOT NULL))`,
    ],
  ];
  for (const [name, body] of checks) {
    await sql.raw(`ALTER TABLE reviews ADD CONSTRAINT ${name} ${body} NOT VALID`).execute(db);
    await sql
      .raw(
        `DO $$ BEGIN ALTER TABLE reviews VALIDATE CONSTRAINT ${name};
         EXCEPTION WHEN foreign_key_violation OR check_violation THEN RAISE WARNING 'older reviews do not meet ${name}; new reviews are checked'; END $$`,
      )
      .execute(db);
  }
  // An approval is of the side's current work, and that render is finished and not superseded.
  await sql`
    CREATE FUNCTION reviews_bind_current_work() RETURNS trigger LANGUAGE plpgsql AS $$
    DECLARE s record; r record;
    BEGIN
      IF NEW.render_id IS NOT NULL THEN
        SELECT status, superseded_at INTO r FROM renders WHERE id = NEW.render_id;
        IF r.status IS DISTINCT FROM 'done' THEN
          RAISE EXCEPTION 'a review names a render that is not finished' USING ERRCODE = 'check_violation';
        END IF;
      ELSIF NEW.decision = 'approved' THEN
        RAISE EXCEPTION 'an approval must name the render it approves' USING ERRCODE = 'check_violation';
      END IF;
      IF NEW.decision = 'approved' THEN
        SELECT current_transfer_id, current_curve_choice_id, current_render_id INTO s FROM sides WHERE id = NEW.side_id;
        IF s.current_render_id IS DISTINCT FROM NEW.render_id OR s.current_transfer_id IS DISTINCT FROM NEW.transfer_id
           OR s.current_curve_choice_id IS DISTINCT FROM NEW.curve_choice_id OR r.superseded_at IS NOT NULL THEN
          RAISE EXCEPTION 'an approval must name the side''s current transfer, curve choice and the render made from them' USING ERRCODE = 'check_violation';
        END IF;
      END IF;
      RETURN NEW;
    END $$`.execute(db);
  await sql`CREATE TRIGGER reviews_bind_current_work BEFORE INSERT ON reviews FOR EACH ROW EXECUTE FUNCTION reviews_bind_current_work()`.execute(
    db,
  );
  // A review is a record: it is never rewritten.
  await sql`
    CREATE FUNCTION reviews_are_final() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN RAISE EXCEPTION 'reviews are permanent: % refused', TG_OP USING ERRCODE = 'insufficient_privilege'; END $$`.execute(
    db,
  );
  await sql`CREATE TRIGGER reviews_are_final BEFORE UPDATE OR DELETE ON reviews FOR EACH ROW EXECUTE FUNCTION reviews_are_final()`.execute(
    db,
  );
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`DROP TRIGGER reviews_are_final ON reviews`.execute(db);
  await sql`DROP FUNCTION reviews_are_final()`.execute(db);
  await sql`DROP TRIGGER reviews_bind_current_work ON reviews`.execute(db);
  await sql`DROP FUNCTION reviews_bind_current_work()`.execute(db);
  await sql`
    ALTER TABLE reviews
      DROP CONSTRAINT reviews_approval_names_all, DROP CONSTRAINT reviews_choice_sha, DROP CONSTRAINT reviews_render_sha,
      DROP CONSTRAINT reviews_transfer_sha, DROP CONSTRAINT reviews_choice_of_side, DROP CONSTRAINT reviews_transfer_of_side,
      DROP CONSTRAINT reviews_render_of_side, DROP CONSTRAINT reviews_render_made_from,
      DROP COLUMN transfer_sha256, DROP COLUMN render_sha256, DROP COLUMN curve_spec_sha256`.execute(db);
  await sql`DROP TRIGGER sides_new_status ON sides`.execute(db);
  await sql`DROP FUNCTION sides_new_status()`.execute(db);
  await sql`DROP TRIGGER sides_status_step ON sides`.execute(db);
  await sql`DROP FUNCTION sides_status_step()`.execute(db);
  await sql`DROP TABLE side_transitions`.execute(db);
  await sql`
    ALTER TABLE sides DROP CONSTRAINT sides_status_has_its_work, DROP CONSTRAINT sides_current_render,
      DROP CONSTRAINT sides_current_choice, DROP CONSTRAINT sides_current_transfer,
      DROP COLUMN current_render_id, DROP COLUMN current_curve_choice_id, DROP COLUMN current_transfer_id`.execute(
    db,
  );
  await sql`
    ALTER TABLE renders DROP CONSTRAINT renders_superseded_reason, DROP COLUMN superseded_reason, DROP COLUMN superseded_at,
      DROP CONSTRAINT renders_choice_of_side, DROP CONSTRAINT renders_transfer_of_side, DROP CONSTRAINT renders_id_sha,
      DROP CONSTRAINT renders_id_made_from, DROP CONSTRAINT renders_id_side`.execute(db);
  await sql`ALTER TABLE curve_choices DROP CONSTRAINT curve_choices_id_sha, DROP COLUMN spec_sha256, DROP CONSTRAINT curve_choices_id_side`.execute(
    db,
  );
  await sql`ALTER TABLE transfers DROP CONSTRAINT transfers_id_sha, DROP CONSTRAINT transfers_id_side`.execute(
    db,
  );
}
