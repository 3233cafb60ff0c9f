import "server-only";
import { sql, type Transaction } from "kysely";
import { z } from "zod";
import { db } from "../../db";
import type { Database } from "../../db/types";
import type { SessionUser } from "../auth/session-user";
import { env } from "../env";
import { AppError } from "../http/errors";
import { enqueueMail } from "../mail/outbox";
import { appendEvent } from "../provenance";

export const decisionSchema = z.object({
  decision: z.enum(["approved", "returned"], { error: "Approve or return." }),
  reason: z.string().trim().max(4000).optional(),
});

/** What the side stands on now: its latest curve choice, transfer and finished render. */
async function currentWork(trx: Transaction<Database>, sideId: string) {
  const [choice, transfer, render] = await Promise.all([
    trx.selectFrom("curve_choices").select(["id", "chosen_by"]).where("side_id", "=", sideId).orderBy("chosen_at", "desc").limit(1).executeTakeFirst(),
    trx.selectFrom("transfers").select(["id", "uploaded_by", "created_at"]).where("side_id", "=", sideId).orderBy("created_at", "desc").limit(1).executeTakeFirst(),
    trx.selectFrom("renders").select(["id", "requested_by", "finished_at"]).where("side_id", "=", sideId).where("status", "=", "done").orderBy("finished_at", "desc").limit(1).executeTakeFirst(),
  ]);
  return { choice, transfer, render };
}

/** Has the object passed a fixity check since it was stored, with no failure after? */
async function fixityPassedSince(trx: Transaction<Database>, kind: "transfer" | "render", id: string, storedAt: Date): Promise<boolean> {
  const last = await trx
    .selectFrom("fixity_checks")
    .select(["outcome", "checked_at"])
    .where("object_kind", "=", kind)
    .where("object_id", "=", id)
    .orderBy("checked_at", "desc")
    .limit(1)
    .executeTakeFirst();
  return !!last && last.outcome === "pass" && last.checked_at.getTime() >= storedAt.getTime();
}

/**
 * The curator's decision on a side in review. Approval is refused to anyone who made
 * its transfer, chose its curve or asked for its render (nobody approves their own
 * work), and until the flat transfer and the access copy have each passed a fixity check
 * since they were stored. A return needs a reason and mails the engineer.
 */
export async function decideReview(actor: SessionUser, sideId: string, input: unknown): Promise<{ status: "approved" | "returned" }> {
  const { decision, reason } = decisionSchema.parse(input);
  if (decision === "returned" && !reason) throw new AppError("invalid", 422, "Say why the side goes back, so the engineer knows what to fix.", { reason: ["A reason is required."] });
  return db.transaction().execute(async (trx) => {
    const side = await trx
      .selectFrom("sides as s")
      .innerJoin("discs as d", "d.id", "s.disc_id")
      .select(["s.id", "s.disc_id", "s.designation", "s.status", "s.version", "s.assigned_engineer_id", "d.shelf_mark"])
      .where("s.id", "=", sideId)
      .forUpdate()
      .executeTakeFirst();
    if (!side) throw new AppError("not_found", 404, "No such side.");
    if (side.status !== "in_review") throw new AppError("conflict", 409, `Only a side in review can be ${decision}; this one is ${side.status.replace("_", " ")}.`);
    const work = await currentWork(trx, side.id);
    if (decision === "approved") {
      const makers = new Set([work.choice?.chosen_by, work.transfer?.uploaded_by, work.render?.requested_by].filter(Boolean));
      if (makers.has(actor.id)) throw new AppError("forbidden", 403, "You made this side's transfer, chose its curve or rendered it: another curator must approve it.");
      if (!work.transfer || !work.render || !work.choice) throw new AppError("conflict", 409, "The side has no finished access copy to approve.");
      const missing: string[] = [];
      if (!(await fixityPassedSince(trx, "transfer", work.transfer.id, work.transfer.created_at))) missing.push("the flat transfer");
      if (!(await fixityPassedSince(trx, "render", work.render.id, work.render.finished_at ?? new Date(0)))) missing.push("the access copy");
      if (missing.length) throw new AppError("conflict", 409, `Run a fixity check first: ${missing.join(" and ")} ${missing.length > 1 ? "have" : "has"} not passed one since being stored.`);
    }
    await trx
      .insertInto("reviews")
      .values({ side_id: side.id, curator_id: actor.id, decision, reason: reason ?? null, transfer_id: work.transfer?.id ?? null, render_id: work.render?.id ?? null, curve_choice_id: work.choice?.id ?? null })
      .execute();
    await trx.updateTable("sides").set({ status: decision, return_reason: decision === "returned" ? reason! : null, version: side.version + 1, updated_at: sql`now()` }).where("id", "=", side.id).execute();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: decision === "approved" ? "side.approved" : "side.returned",
      subjectType: "side",
      subjectId: side.id,
      discId: side.disc_id,
      payload: {
        side: side.designation,
        before: { status: "in_review" },
        after: { status: decision },
        ...(reason ? { reason } : {}),
        transferId: work.transfer?.id ?? null,
        renderId: work.render?.id ?? null,
        curveChoiceId: work.choice?.id ?? null,
      },
    });
    if (decision === "returned" && side.assigned_engineer_id) {
      const engineer = await trx.selectFrom("users").select("email").where("id", "=", side.assigned_engineer_id).executeTakeFirst();
      if (engineer) {
        await enqueueMail(trx, {
          to: engineer.email,
          subject: `${side.shelf_mark} side ${side.designation} came back from review`,
          text: [`${actor.name} returned ${side.shelf_mark} side ${side.designation}:`, "", reason!, "", `Open it on the bench: ${env().APP_URL}/bench/${side.id}`].join("\n"),
        });
      }
    }
    return { status: decision };
  });
}

export async function listReviewQueue() {
  return db
    .selectFrom("sides as s")
    .innerJoin("discs as d", "d.id", "s.disc_id")
    .leftJoin("users as u", "u.id", "s.assigned_engineer_id")
    .select(["s.id", "s.designation", "s.title", "s.matrix_number as matrixNumber", "s.updated_at as submittedAt", "d.id as discId", "d.shelf_mark as shelfMark", "d.label_name as labelName", "d.catalogue_number as catalogueNumber", "d.format", "u.name as engineerName"])
    .where("s.status", "=", "in_review")
    .orderBy("s.updated_at")
    .execute();
}

export async function listFixity(sideId: string) {
  return db
    .selectFrom("fixity_checks")
    .select(["id", "object_kind as objectKind", "object_id as objectId", "expected_sha256 as expectedSha256", "actual_sha256 as actualSha256", "bytes", "outcome", "detail", "checked_at as checkedAt"])
    .where("side_id", "=", sideId)
    .orderBy("checked_at", "desc")
    .limit(50)
    .execute();
}

export async function listReviews(sideId: string) {
  return db
    .selectFrom("reviews as r")
    .innerJoin("users as u", "u.id", "r.curator_id")
    .select(["r.id", "r.decision", "r.reason", "r.decided_at as decidedAt", "u.name as curatorName"])
    .where("r.side_id", "=", sideId)
    .orderBy("r.decided_at", "desc")
    .execute();
}
