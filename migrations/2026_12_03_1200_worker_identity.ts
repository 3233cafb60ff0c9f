import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// Which worker process did the work: the render's maker (its lease holder when it was
// recorded) and the fixity check's reader, as host:pid:random. Several workers share one
// database; this names who did what, for the operator tracing a fault.
export async function up(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE renders ADD COLUMN worker_identity text`.execute(db);
  await sql`ALTER TABLE fixity_checks ADD COLUMN worker_identity text`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE fixity_checks DROP COLUMN worker_identity`.execute(db);
  await sql`ALTER TABLE renders DROP COLUMN worker_identity`.execute(db);
}
