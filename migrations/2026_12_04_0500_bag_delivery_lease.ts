import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
// A bag delivery keeps a lease: the server writing the bag renews heartbeat_at every few
// seconds, so a delivery whose server stopped mid-way (restarted, killed) is seen as stale
// and closed as stopped by the worker's sweep (lib/exports/delivery-lease.ts) instead of
// staying "being written" forever.
export async function up(db: Kysely<unknown>): Promise<void> {
  await sql`ALTER TABLE bag_deliveries ADD COLUMN heartbeat_at timestamptz`.execute(db);
}

export async function down(db: Kysely<unknown>): Promise<void> {
  await sql`ALTER TABLE bag_deliveries DROP COLUMN heartbeat_at`.execute(db);
}
