import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// Access copies may be written at a rate the lab chooses: each render records its rate,
// and the lab's default rate and word length are settings.
export async function up(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE renders ADD COLUMN sample_rate_hz integer`.execute(db);
  await sql`UPDATE renders r SET sample_rate_hz = t.sample_rate_hz FROM transfers t WHERE t.id = r.transfer_id`.execute(
    db,
  );
  await sql`INSERT INTO lab_settings (key, value) VALUES ('access_copy_rate_hz', '"transfer"'::jsonb), ('access_copy_bit_depth', '24'::jsonb) ON CONFLICT (key) DO NOTHING`.execute(
    db,
  );
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`DELETE FROM lab_settings WHERE key IN ('access_copy_rate_hz', 'access_copy_bit_depth')`.execute(
    db,
  );
  await sql`ALTER TABLE renders DROP COLUMN sample_rate_hz`.execute(db);
}
