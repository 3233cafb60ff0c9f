import "server-only";
import { z } from "zod";
import { db } from "../../db";
import type { SessionUser } from "../auth/session-user";
import { escapeLike } from "../catalogue/list-query";
import { verifyChain } from ".";

/** Walks the whole chain against every checkpoint in the bucket, records the run, and answers the report. */
export async function runChainCheck(actor: SessionUser) {
  const report = await verifyChain(db);
  const brokenReason =
    report.brokenAt?.reason ??
    (report.checkpoints.problems.length ? report.checkpoints.problems.join(" ") : null);
  await db
    .insertInto("chain_checks")
    .values({
      ok: report.ok,
      events: report.events,
      broken_seq: report.brokenAt?.seq ?? null,
      broken_reason: brokenReason,
      run_by: actor.id,
      checkpoints: report.checkpoints.checked,
      checkpoint_source: report.checkpoints.source,
      contradicted_checkpoint: report.contradicts?.key ?? null,
    })
    .execute();
  return report;
}

export async function lastChainCheck() {
  return db
    .selectFrom("chain_checks as c")
    .leftJoin("users as u", "u.id", "c.run_by")
    .select([
      "c.ok",
      "c.events",
      "c.broken_seq as brokenSeq",
      "c.broken_reason as brokenReason",
      "c.checked_at as checkedAt",
      "u.name as runBy",
      "c.checkpoints",
      "c.checkpoint_source as checkpointSource",
      "c.contradicted_checkpoint as contradictedCheckpoint",
    ])
    .orderBy("c.checked_at", "desc")
    .limit(1)
    .executeTakeFirst();
}

const eventQuerySchema = z.object({
  disc: z.uuid().optional(),
  kind: z.string().trim().max(80).optional(),
  actor: z.uuid().optional(),
  before: z.coerce.number().int().positive().optional(),
  limit: z.coerce.number().int().min(1).max(500).default(100),
});

/** The log, newest first, filtered by disc, kind (prefix, e.g. "side." or "side.rendered") and person; paged by seq. */
export async function listEvents(input: unknown) {
  const q = eventQuerySchema.parse(input);
  let query = db
    .selectFrom("provenance_events as e")
    .leftJoin("users as u", "u.id", "e.actor_id")
    .leftJoin("discs as d", "d.id", "e.disc_id")
    .select([
      "e.seq",
      "e.id",
      "e.at",
      "e.kind",
      "e.subject_type as subjectType",
      "e.subject_id as subjectId",
      "e.disc_id as discId",
      "d.shelf_mark as shelfMark",
      "e.payload",
      "e.hash",
      "e.prev_hash as prevHash",
      "u.name as actorName",
      "e.actor_id as actorId",
    ])
    .orderBy("e.seq", "desc")
    .limit(q.limit);
  if (q.disc) query = query.where("e.disc_id", "=", q.disc);
  if (q.kind) query = query.where("e.kind", "like", `${escapeLike(q.kind)}%`);
  if (q.actor) query = query.where("e.actor_id", "=", q.actor);
  if (q.before) query = query.where("e.seq", "<", q.before);
  return query.execute();
}
