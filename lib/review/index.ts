import "server-only";
import type { Transaction } from "kysely";
import { z } from "zod";
import { db } from "../../db";
import type { Database } from "../../db/types";
import type { SessionUser } from "../auth/session-user";
import { env } from "../env";
import { AppError } from "../http/errors";
import { enqueueMail } from "../mail/outbox";
import { type LockedSide, lockSide, reviewDecided } from "../sides/lifecycle";
import { parseStored, storedCurveSpecSchema } from "../validation/records";

export const decisionSchema = z.object({
  decision: z.enum(["approved", "returned"], { error: "Approve or return." }),
  reason: z.string().trim().max(4000).optional(),
});

/**
 * What the side stands on now: its current flat transfer, curve choice and the access
 * copy rendered from exactly those two (lib/sides keeps them; the database holds them
 * consistent), each with the SHA-256 a review records.
 */
async function currentWork(trx: Transaction<Database>, side: LockedSide) {
  const [transfer, choice, render] = await Promise.all([
    side.current_transfer_id
      ? trx
          .selectFrom("transfers")
          .select(["id", "sha256", "file_name", "created_at"])
          .where("id", "=", side.current_transfer_id)
          .executeTakeFirst()
      : undefined,
    side.current_curve_choice_id
      ? trx
          .selectFrom("curve_choices")
          .select([
            "id",
            "spec_sha256",
            "preset_name",
            "preset_version",
            "overrides",
            "spec",
            "correct_speed",
          ])
          .where("id", "=", side.current_curve_choice_id)
          .executeTakeFirst()
      : undefined,
    side.current_render_id
      ? trx
          .selectFrom("renders")
          .select(["id", "sha256", "finished_at", "transfer_id", "curve_choice_id", "superseded_at"])
          .where("id", "=", side.current_render_id)
          .where("status", "=", "done")
          .executeTakeFirst()
      : undefined,
  ]);
  // The curve as stored, parsed with its schema before it goes into the approval's record.
  const parsedChoice = choice && {
    ...choice,
    spec: parseStored(storedCurveSpecSchema, choice.spec, {
      table: "curve_choices",
      id: choice.id,
      column: "spec",
    }),
    overrides: parseStored(storedCurveSpecSchema, choice.overrides, {
      table: "curve_choices",
      id: choice.id,
      column: "overrides",
    }),
  };
  return { transfer, choice: parsedChoice, render };
}

/** Everyone who made any transfer, curve choice or render of the side, in any round. */
async function makersOf(trx: Transaction<Database>, sideId: string): Promise<Set<string>> {
  const rows = await trx
    .selectFrom("transfers")
    .select("uploaded_by as who")
    .where("side_id", "=", sideId)
    .union(trx.selectFrom("curve_choices").select("chosen_by as who").where("side_id", "=", sideId))
    .union(trx.selectFrom("renders").select("requested_by as who").where("side_id", "=", sideId))
    .execute();
  return new Set(rows.map((r) => r.who));
}

/** Has the object passed a fixity check since it was stored, with no failure after? */
async function fixityPassedSince(
  trx: Transaction<Database>,
  kind: "transfer" | "render",
  id: string,
  storedAt: Date,
): Promise<boolean> {
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
export async function decideReview(
  actor: SessionUser,
  sideId: string,
  input: unknown,
): Promise<{ status: "approved" | "returned" }> {
  const { decision, reason } = decisionSchema.parse(input);
  if (decision === "returned" && !reason)
    throw new AppError("invalid", 422, "Say why the side goes back, so the engineer knows what to fix.", {
      reason: ["A reason is required."],
    });
  return db.transaction().execute(async (trx) => {
    const side = await lockSide(trx, sideId);
    const disc = await trx
      .selectFrom("discs")
      .select("shelf_mark")
      .where("id", "=", side.disc_id)
      .executeTakeFirstOrThrow();
    if (side.status !== "in_review")
      throw new AppError(
        "conflict",
        409,
        `Only a side in review can be ${decision}; this one is ${side.status.replace("_", " ")}.`,
      );
    const work = await currentWork(trx, side);
    if (decision === "approved") {
      if ((await makersOf(trx, side.id)).has(actor.id)) {
        throw new AppError(
          "forbidden",
          403,
          "You made a transfer, chose a curve or asked for a render of this side (in this round or an earlier one): another curator must approve it.",
        );
      }
      if (!work.transfer || !work.render || !work.choice || work.render.superseded_at)
        throw new AppError(
          "conflict",
          409,
          "The side has no current access copy rendered from its current transfer and curve to approve.",
        );
      const missing: string[] = [];
      if (!(await fixityPassedSince(trx, "transfer", work.transfer.id, work.transfer.created_at)))
        missing.push("the flat transfer");
      if (!(await fixityPassedSince(trx, "render", work.render.id, work.render.finished_at ?? new Date(0))))
        missing.push("the access copy");
      if (missing.length)
        throw new AppError(
          "conflict",
          409,
          `Run a fixity check first: ${missing.join(" and ")} ${missing.length > 1 ? "have" : "has"} not passed one since being stored.`,
        );
    }
    // The review names the triple with the SHA-256s the curator saw; the database refuses
    // one whose render was not made from its transfer and curve choice.
    const review = await trx
      .insertInto("reviews")
      .values({
        side_id: side.id,
        curator_id: actor.id,
        decision,
        reason: reason ?? null,
        transfer_id: work.transfer?.id ?? null,
        transfer_sha256: work.transfer?.sha256 ?? null,
        curve_choice_id: work.choice?.id ?? null,
        curve_spec_sha256: work.choice?.spec_sha256 ?? null,
        render_id: work.render?.id ?? null,
        render_sha256: work.render?.sha256 ?? null,
      })
      .returning("id")
      .executeTakeFirstOrThrow();
    await reviewDecided(trx, actor, side, decision, reason ?? null, {
      reviewId: review.id,
      transfer: work.transfer
        ? { id: work.transfer.id, sha256: work.transfer.sha256, fileName: work.transfer.file_name }
        : null,
      curveChoice: work.choice
        ? {
            id: work.choice.id,
            specSha256: work.choice.spec_sha256,
            presetName: work.choice.preset_name,
            presetVersion: work.choice.preset_version,
            overrides: work.choice.overrides,
            spec: work.choice.spec,
            // Not part of the spec's hash: whether the render corrected the speed to the cut's.
            correctSpeed: work.choice.correct_speed,
          }
        : null,
      render: work.render ? { id: work.render.id, sha256: work.render.sha256 } : null,
      // The flat ids too, as earlier events carried them.
      transferId: work.transfer?.id ?? null,
      renderId: work.render?.id ?? null,
      curveChoiceId: work.choice?.id ?? null,
    });
    if (decision === "returned" && side.assigned_engineer_id) {
      const engineer = await trx
        .selectFrom("users")
        .select("email")
        .where("id", "=", side.assigned_engineer_id)
        .executeTakeFirst();
      if (engineer) {
        await enqueueMail(trx, {
          to: engineer.email,
          subject: `${disc.shelf_mark} side ${side.designation} came back from review`,
          text: [
            `${actor.name} returned ${disc.shelf_mark} side ${side.designation}:`,
            "",
            reason!,
            "",
            `Open it on the bench: ${env().APP_URL}/bench/${side.id}`,
          ].join("\n"),
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
    .select([
      "s.id",
      "s.designation",
      "s.title",
      "s.matrix_number as matrixNumber",
      "s.updated_at as submittedAt",
      "d.id as discId",
      "d.shelf_mark as shelfMark",
      "d.label_name as labelName",
      "d.catalogue_number as catalogueNumber",
      "d.format",
      "u.name as engineerName",
    ])
    .where("s.status", "=", "in_review")
    .orderBy("s.updated_at")
    .execute();
}

export async function listFixity(sideId: string) {
  return db
    .selectFrom("fixity_checks")
    .select([
      "id",
      "object_kind as objectKind",
      "object_id as objectId",
      "expected_sha256 as expectedSha256",
      "actual_sha256 as actualSha256",
      "bytes",
      "outcome",
      "detail",
      "checked_at as checkedAt",
    ])
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
