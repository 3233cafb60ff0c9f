import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// Each person's session version: every session cookie carries the version it was signed
// in under, and stops working once the version moves on (sign-out, password reset,
// deactivation, role change).
export async function up(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE users ADD COLUMN session_version integer NOT NULL DEFAULT 1`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE users DROP COLUMN session_version`.execute(db);
}
