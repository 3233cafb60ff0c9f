import type { Kysely } from "kysely";
import type { Database } from "../../db/types";
import { env } from "../env";
import { enqueueMail } from "../mail/outbox";
import { type Checkpoint, newCheckpointKey, putCheckpointObject } from "./checkpoint-store";
import { type ChainReport, verifyChain } from ".";

export type CheckpointOutcome =
  | { status: "written"; key: string; checkpoint: Checkpoint; mailedTo: number }
  /** A scheduled run when nothing was appended since the newest checkpoint. */
  | { status: "unchanged"; key: string }
  | { status: "empty" }
  /** The chain did not verify: nothing is anchored, and the curators are told. */
  | { status: "refused"; report: ChainReport };

async function activeCurators(db: Kysely<Database>): Promise<string[]> {
  return (
    await db
      .selectFrom("users")
      .select("email")
      .where("role", "=", "curator")
      .where("active", "=", true)
      .orderBy("email")
      .execute()
  ).map((u) => u.email);
}

function checkpointMailText(key: string, cp: Checkpoint): string {
  return [
    `Rillbook wrote a checkpoint of ${cp.lab}'s provenance log.`,
    "",
    `Entries:       ${cp.events}`,
    `Head entry:    ${cp.headSeq}`,
    `Head hash:     ${cp.headHash}`,
    `Taken at:      ${cp.takenAt}`,
    `Stored as:     ${key}`,
    "",
    "Keep this message: it is a copy of the checkpoint outside the lab's systems. If the log",
    "is ever cut short or rewritten, its verification on the audit page names the first",
    "checkpoint it contradicts; this message lets you confirm that checkpoint independently.",
    "",
    `Audit page: ${env().APP_URL}/audit`,
  ].join("\n");
}

/**
 * Verifies the chain up to its current head and, if it holds, anchors that head: a
 * checkpoint object in the bucket (never overwritten), a row noting it, and a mail to
 * each active curator. A chain that does not verify is not anchored (that would vouch
 * for a damaged log); the curators are mailed the failure instead. Scheduled runs skip
 * a head that is already anchored; a requested run always writes.
 */
export async function takeCheckpoint(
  db: Kysely<Database>,
  opts: { reason: "scheduled" | "requested"; requestedBy?: string | null },
): Promise<CheckpointOutcome> {
  const head = await db
    .selectFrom("provenance_events")
    .select(["seq", "hash"])
    .orderBy("seq", "desc")
    .limit(1)
    .executeTakeFirst();
  if (!head) return { status: "empty" };
  const report = await verifyChain(db, { throughSeq: Number(head.seq) });
  const curators = await activeCurators(db);

  if (!report.ok || !report.head) {
    const what = report.contradicts
      ? `The log contradicts checkpoint ${report.contradicts.key} (entry ${report.contradicts.headSeq}, ` +
        `taken ${report.contradicts.takenAt}): ${report.contradicts.reason}.`
      : report.brokenAt
        ? `The chain is broken at entry ${report.brokenAt.seq}: ${report.brokenAt.reason}.`
        : report.checkpoints.problems.join("\n");
    await db.transaction().execute(async (trx) => {
      for (const to of curators) {
        await enqueueMail(trx, {
          to,
          subject: `Provenance log did not verify: no checkpoint written`,
          text: [
            what,
            "",
            "No new checkpoint was written. Follow the institution's procedure for a damaged record.",
            `Audit page: ${env().APP_URL}/audit`,
          ].join("\n"),
        });
      }
    });
    return { status: "refused", report };
  }

  const newest = report.checkpoints.newest;
  if (opts.reason === "scheduled" && newest && newest.headSeq === report.head.seq)
    return { status: "unchanged", key: newest.key };

  const checkpoint: Checkpoint = {
    kind: "rillbook.chain-checkpoint",
    version: 1,
    lab: env().LAB_NAME,
    headSeq: report.head.seq,
    headHash: report.head.hash,
    events: report.events,
    takenAt: new Date().toISOString(),
    reason: opts.reason,
  };
  const key = newCheckpointKey(checkpoint);
  await putCheckpointObject(key, checkpoint);
  await db.transaction().execute(async (trx) => {
    await trx
      .insertInto("chain_checkpoints")
      .values({
        object_key: key,
        head_seq: checkpoint.headSeq,
        head_hash: checkpoint.headHash,
        events: checkpoint.events,
        taken_at: checkpoint.takenAt,
        reason: checkpoint.reason,
        requested_by: opts.requestedBy ?? null,
      })
      .execute();
    for (const to of curators) {
      await enqueueMail(trx, {
        to,
        subject: `Provenance checkpoint: ${checkpoint.events} entries, head ${checkpoint.headHash.slice(0, 12)}…`,
        text: checkpointMailText(key, checkpoint),
      });
    }
  });
  return { status: "written", key, checkpoint, mailedTo: curators.length };
}

/** The newest checkpoint the database notes (for display; verification reads the bucket). */
export async function lastCheckpoint(db: Kysely<Database>) {
  return db
    .selectFrom("chain_checkpoints as c")
    .leftJoin("users as u", "u.id", "c.requested_by")
    .select([
      "c.object_key as key",
      "c.head_seq as headSeq",
      "c.head_hash as headHash",
      "c.events",
      "c.taken_at as takenAt",
      "c.reason",
      "u.name as requestedBy",
    ])
    .orderBy("c.head_seq", "desc")
    .orderBy("c.taken_at", "desc")
    .limit(1)
    .executeTakeFirst();
}
