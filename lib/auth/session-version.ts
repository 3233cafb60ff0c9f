import "server-only";
import { sql, type Kysely, type Transaction } from "kysely";
import type { Database } from "../../db/types";

/**
 * Ends every session of a person at once: each session cookie carries the session version
 * it was signed in under (lib/auth/options.ts), and currentUser() (lib/auth/session.ts)
 * refuses a cookie whose version is not the person's current one. Called on sign-out,
 * password reset, deactivation and role change, inside the transaction of the change.
 * A copied cookie therefore stops working everywhere, not only in the browser it came from.
 */
export async function endSessions(
  db: Kysely<Database> | Transaction<Database>,
  userId: string,
  onlyIfVersion?: number,
): Promise<void> {
  let q = db
    .updateTable("users")
    .set({ session_version: sql`session_version + 1` })
    .where("id", "=", userId);
  if (onlyIfVersion !== undefined) q = q.where("session_version", "=", onlyIfVersion);
  await q.execute();
}
