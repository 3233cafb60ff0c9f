import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// A label image added by mistake (the wrong disc, the wrong side, a blurred shot) is
// withdrawn, never deleted: it leaves the disc's page, its record and its bags, but its row,
// its object and its thumbnail stay (the provenance log names them), still under fixity and
// backup. Withdrawing needs a reason and is final; the database refuses any other change to
// a stored image, and any change at all to a withdrawn or refused one.
export async function up(db: Kysely<unknown>): Promise<void> {
  await sql`
    ALTER TABLE label_images
      ADD COLUMN withdrawn_at timestamptz,
      ADD COLUMN withdrawn_by uuid REFERENCES users(id),
      ADD COLUMN withdrawn_reason text`.execute(db);
  await sql`ALTER TABLE label_images DROP CONSTRAINT label_images_state`.execute(db);
  await sql`ALTER TABLE label_images ADD CONSTRAINT label_images_state
    CHECK (state IN ('pending', 'stored', 'refused', 'withdrawn'))`.execute(db);
  await sql`ALTER TABLE label_images DROP CONSTRAINT label_images_stored`.execute(db);
  await sql`ALTER TABLE label_images ADD CONSTRAINT label_images_stored
    CHECK ((state IN ('stored', 'withdrawn')) = (sha256 IS NOT NULL AND bytes IS NOT NULL AND format IS NOT NULL
      AND thumbnail_key IS NOT NULL AND stored_at IS NOT NULL))`.execute(db);
  await sql`ALTER TABLE label_images ADD CONSTRAINT label_images_withdrawn
    CHECK ((state = 'withdrawn') = coalesce(withdrawn_at IS NOT NULL AND withdrawn_by IS NOT NULL
      AND length(btrim(withdrawn_reason)) BETWEEN 1 AND 1000, false))`.execute(db);
  // Not a refuse_* function (db/roles.ts takes those tables from the app role as append-only):
  // a pending image still becomes stored or refused, and a stored one withdrawn.
  await sql`
    CREATE FUNCTION keep_label_image_on_record() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF TG_OP = 'DELETE' THEN
        IF OLD.state IN ('stored', 'withdrawn') THEN
          RAISE EXCEPTION 'a stored label image is never deleted: withdraw it, with a reason';
        END IF;
        RETURN OLD;
      END IF;
      IF OLD.state IN ('refused', 'withdrawn') THEN
        RAISE EXCEPTION 'a % label image is on record as it is: it is never changed', OLD.state;
      END IF;
      IF OLD.state = 'stored' AND (NEW.state <> 'withdrawn'
          OR (to_jsonb(NEW) - ARRAY['state', 'withdrawn_at', 'withdrawn_by', 'withdrawn_reason'])
             <> (to_jsonb(OLD) - ARRAY['state', 'withdrawn_at', 'withdrawn_by', 'withdrawn_reason'])) THEN
        RAISE EXCEPTION 'a stored label image is never changed: it may only be withdrawn, with a reason';
      END IF;
      RETURN NEW;
    END $$`.execute(db);
  await sql`
    CREATE TRIGGER label_images_on_record BEFORE UPDATE OR DELETE ON label_images
    FOR EACH ROW EXECUTE FUNCTION keep_label_image_on_record()`.execute(db);
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await sql`DROP TRIGGER label_images_on_record ON label_images`.execute(db);
  await sql`DROP FUNCTION keep_label_image_on_record()`.execute(db);
  await sql`UPDATE label_images SET state = 'stored' WHERE state = 'withdrawn'`.execute(db);
  await sql`ALTER TABLE label_images DROP CONSTRAINT label_images_withdrawn`.execute(db);
  await sql`ALTER TABLE label_images DROP CONSTRAINT label_images_stored`.execute(db);
  await sql`ALTER TABLE label_images ADD CONSTRAINT label_images_stored
    CHECK ((state = 'stored') = (sha256 IS NOT NULL AND bytes IS NOT NULL AND format IS NOT NULL
      AND thumbnail_key IS NOT NULL AND stored_at IS NOT NULL))`.execute(db);
  await sql`ALTER TABLE label_images DROP CONSTRAINT label_images_state`.execute(db);
  await sql`ALTER TABLE label_images ADD CONSTRAINT label_images_state
    CHECK (state IN ('pending', 'stored', 'refused'))`.execute(db);
  await sql`
    ALTER TABLE label_images
      DROP COLUMN withdrawn_at, DROP COLUMN withdrawn_by, DROP COLUMN withdrawn_reason`.execute(db);
}
