import type { Kysely, Transaction } from "kysely";
import { sql } from "kysely";
import type { Transporter } from "nodemailer";
import type { Database } from "../../db/types";

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
}

/**
 * Queues a message in the outbox inside the caller's transaction, so the mail exists
 * exactly when the change that caused it does. The worker sends it (deliverDueMail).
 */
export async function enqueueMail(
  trx: Transaction<Database> | Kysely<Database>,
  mail: OutgoingMail,
): Promise<string> {
  const row = await trx
    .insertInto("outbox")
    .values({ to_address: mail.to, subject: mail.subject, body_text: mail.text })
    .returning("id")
    .executeTakeFirstOrThrow();
  return row.id;
}

/** After this many failed attempts a message is marked failed and left for a person to look at. */
export const maxAttempts = 8;

/** Backoff before attempt n+1: 30 s, 1 min, 2 min … capped at 1 h. */
export function retryDelaySeconds(attempts: number): number {
  return Math.min(3600, 30 * 2 ** Math.max(0, attempts - 1));
}

/**
 * Sends due messages one at a time, each inside its own transaction holding a row lock
 * (FOR UPDATE SKIP LOCKED), so several workers never send the same message twice.
 * Returns how many were sent and how many failed this round. `sendNow` limits the
 * round to those messages and ignores their schedule (a person asked to retry them).
 */
export async function deliverDueMail(
  db: Kysely<Database>,
  transport: Transporter,
  from: string,
  opts: { limit?: number; sendNow?: string[] } = {},
): Promise<{ sent: number; failed: number }> {
  if (opts.sendNow?.length === 0) return { sent: 0, failed: 0 };
  const limit = opts.limit ?? 20;
  const tried: string[] = []; // each message at most once a round
  let sent = 0;
  let failed = 0;
  for (let i = 0; i < limit; i++) {
    const outcome = await db.transaction().execute(async (trx) => {
      let q = trx
        .selectFrom("outbox")
        .select(["id", "to_address", "subject", "body_text", "attempts"])
        .where("status", "=", "queued");
      q = opts.sendNow
        ? q.where("id", "in", opts.sendNow)
        : q.where("next_attempt_at", "<=", sql<Date>`now()`);
      if (tried.length) q = q.where("id", "not in", tried);
      const msg = await q.orderBy("created_at").limit(1).forUpdate().skipLocked().executeTakeFirst();
      if (!msg) return "none" as const;
      tried.push(msg.id);
      try {
        await transport.sendMail({ from, to: msg.to_address, subject: msg.subject, text: msg.body_text });
        await trx
          .updateTable("outbox")
          .set({ status: "sent", sent_at: sql`now()`, attempts: msg.attempts + 1, last_error: null })
          .where("id", "=", msg.id)
          .execute();
        return "sent" as const;
      } catch (err) {
        const attempts = msg.attempts + 1;
        await trx
          .updateTable("outbox")
          .set({
            attempts,
            last_error: err instanceof Error ? err.message : String(err),
            status: attempts >= maxAttempts ? "failed" : "queued",
            next_attempt_at: sql`now() + make_interval(secs => ${retryDelaySeconds(attempts)})`,
          })
          .where("id", "=", msg.id)
          .execute();
        return "failed" as const;
      }
    });
    if (outcome === "none") break;
    if (outcome === "sent") sent++;
    else failed++;
  }
  return { sent, failed };
}
