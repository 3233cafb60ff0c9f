import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// A running render holds a lease: the worker working on it is named in lease_owner and
// renews heartbeat_at every few seconds. A render in 'running' whose lease has gone stale
// (its worker died) is handed back to the queue by any worker's sweep, or shown on the
// bench as stalled, where the engineer may cancel it ('cancelled').
export async function up(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE renders ADD COLUMN heartbeat_at timestamptz`.execute(db);
  await sql`ALTER TABLE renders ADD COLUMN lease_owner text`.execute(db);
  await sql`ALTER TABLE renders DROP CONSTRAINT renders_status`.execute(db);
  await sql`ALTER TABLE renders ADD CONSTRAINT renders_status CHECK (status IN ('queued', 'running', 'done', 'failed', 'cancelled'))`.execute(
    db,
  );
  await sql`CREATE INDEX renders_running_lease ON renders (heartbeat_at) WHERE status = 'running'`.execute(
    db,
  );
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`DROP INDEX renders_running_lease`.execute(db);
  await sql`UPDATE renders SET status = 'failed' WHERE status = 'cancelled'`.execute(db);
  await sql`ALTER TABLE renders DROP CONSTRAINT renders_status`.execute(db);
  await sql`ALTER TABLE renders ADD CONSTRAINT renders_status CHECK (status IN ('queued', 'running', 'done', 'failed'))`.execute(
    db,
  );
  await sql`ALTER TABLE renders DROP COLUMN lease_owner`.execute(db);
  await sql`ALTER TABLE renders DROP COLUMN heartbeat_at`.execute(db);
}
