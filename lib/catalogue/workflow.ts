import "server-only";
import { sql } from "kysely";
import { db } from "../../db";
import type { SideStatus } from "../../db/types";
import { can } from "../auth/permissions";
import type { SessionUser } from "../auth/session-user";
import { AppError } from "../http/errors";
import { enqueueMail } from "../mail/outbox";
import { env } from "../env";
import { appendEvents, type NewEvent } from "../provenance";
import { decideReview } from "../review";
import { assignSide, lockSide, lockSides, submitForReview, transitions } from "../sides/lifecycle";
import { assignSchema, statusLabels, transitionSchema } from "../validation/catalogue";

export { transitions } from "../sides/lifecycle";

/**
 * The one plain step a person asks for by name: the engineer sends a rendered side for
 * review. Approving and returning are the curator's review; every other step follows from
 * the work itself (lib/sides/lifecycle.ts).
 */
export async function transitionSide(
  actor: SessionUser,
  sideId: string,
  input: unknown,
): Promise<{ status: SideStatus }> {
  const { to, reason } = transitionSchema.parse(input);
  if (to === "approved" || to === "returned") {
    if (!can(actor.role, "review:decide"))
      throw new AppError("forbidden", 403, "Only a curator approves or returns a side.");
    return decideReview(actor, sideId, { decision: to, reason });
  }
  return db.transaction().execute(async (trx) => {
    const side = await lockSide(trx, sideId);
    if (to !== "in_review") {
      const step = transitions.find((t) => t.from === side.status && t.to === to);
      const allowed = transitions
        .filter((t) => t.from === side.status)
        .map((t) => statusLabels[t.to].toLowerCase());
      throw new AppError(
        "conflict",
        409,
        step
          ? `A side becomes ${statusLabels[to].toLowerCase()} when ${step.means.replace(/^its /, "its ")}; ` +
              `that happens on the bench or in review, not as a step of its own.`
          : `A side that is ${statusLabels[side.status].toLowerCase()} cannot become ` +
              `${statusLabels[to].toLowerCase()}${allowed.length ? `; next is ${[...new Set(allowed)].join(" or ")}` : ""}.`,
      );
    }
    if (!can(actor.role, "bench:use"))
      throw new AppError("forbidden", 403, `Your role may not send a side for review.`);
    if (side.assigned_engineer_id !== actor.id)
      throw new AppError("forbidden", 403, "This side is assigned to another engineer.");
    await submitForReview(trx, actor, side);
    return { status: side.status };
  });
}

/**
 * Assigns sides (or every side of the given discs) to a transfer engineer: catalogued,
 * returned and already assigned sides move to "assigned"; sides further along are left
 * and reported. The engineer gets one e-mail through the outbox. All or nothing.
 */
export async function assignSides(
  actor: SessionUser,
  input: unknown,
): Promise<{ assigned: number; skipped: { sideId: string; reason: string }[] }> {
  const { engineerId, sideIds, discIds } = assignSchema.parse(input);
  return db.transaction().execute(async (trx) => {
    const engineer = await trx
      .selectFrom("users")
      .select(["id", "name", "email", "role", "active"])
      .where("id", "=", engineerId)
      .executeTakeFirst();
    if (!engineer || engineer.role !== "engineer" || !engineer.active) {
      throw new AppError("invalid", 422, "Choose an active transfer engineer.", {
        engineerId: ["Not an active transfer engineer."],
      });
    }
    const wanted = await trx
      .selectFrom("sides as s")
      .select("s.id")
      .where((eb) =>
        eb.or([
          ...(sideIds.length ? [eb("s.id", "in", sideIds)] : []),
          ...(discIds.length ? [eb("s.disc_id", "in", discIds)] : []),
        ]),
      )
      .execute();
    const locked = await lockSides(
      trx,
      wanted.map((w) => w.id),
    );
    const discs = locked.length
      ? await trx
          .selectFrom("discs")
          .select(["id", "shelf_mark"])
          .where("id", "in", [...new Set(locked.map((s) => s.disc_id))])
          .execute()
      : [];
    const shelfMarks = new Map(discs.map((d) => [d.id, d.shelf_mark]));
    const sides = locked
      .map((s) => ({ side: s, shelfMark: shelfMarks.get(s.disc_id) ?? "" }))
      .sort(
        (a, b) =>
          a.shelfMark.localeCompare(b.shelfMark) || a.side.designation.localeCompare(b.side.designation),
      );
    const skipped: { sideId: string; reason: string }[] = [];
    const done: string[] = [];
    const events: NewEvent[] = [];
    for (const { side: s, shelfMark } of sides) {
      if (!["catalogued", "returned", "assigned"].includes(s.status)) {
        skipped.push({
          sideId: s.id,
          reason: `${shelfMark} side ${s.designation} is already ${statusLabels[s.status].toLowerCase()}`,
        });
        continue;
      }
      if (s.status === "assigned" && s.assigned_engineer_id === engineerId) continue;
      await assignSide(trx, actor, s, engineer, events);
      done.push(`${shelfMark} side ${s.designation}`);
    }
    // One lock and batched inserts for the whole assignment (it may cover thousands of sides).
    await appendEvents(trx, events);
    if (done.length) {
      await enqueueMail(trx, {
        to: engineer.email,
        subject: `${done.length} side${done.length === 1 ? "" : "s"} assigned to you at ${env().LAB_NAME}`,
        text: [
          `${actor.name} assigned these sides to you for transfer:`,
          "",
          ...done.slice(0, 200).map((d) => `  • ${d}`),
          ...(done.length > 200 ? [`  … and ${done.length - 200} more`] : []),
          "",
          `Your queue: ${env().APP_URL}/queue`,
        ].join("\n"),
      });
    }
    return { assigned: done.length, skipped };
  });
}

/** The sides assigned to an engineer that still need their work. */
export async function listQueue(engineerId: string) {
  return db
    .selectFrom("sides as s")
    .innerJoin("discs as d", "d.id", "s.disc_id")
    .select([
      "s.id",
      "s.designation",
      "s.matrix_number as matrixNumber",
      "s.title",
      "s.status",
      "s.return_reason as returnReason",
      "s.updated_at as updatedAt",
      "d.id as discId",
      "d.shelf_mark as shelfMark",
      "d.label_name as labelName",
      "d.catalogue_number as catalogueNumber",
      "d.format",
      "d.nominal_speed_rpm as nominalSpeedRpm",
    ])
    .where("s.assigned_engineer_id", "=", engineerId)
    .where("s.status", "in", ["assigned", "transferred", "curve_chosen", "rendered", "returned"])
    .orderBy(sql`s.status = 'returned'`, "desc")
    .orderBy("s.updated_at")
    .execute();
}

export async function listEngineers() {
  return db
    .selectFrom("users")
    .select(["id", "name"])
    .where("role", "=", "engineer")
    .where("active", "=", true)
    .orderBy("name")
    .execute();
}

export async function listDiscEvents(discId: string) {
  const rows = await db
    .selectFrom("provenance_events as e")
    .leftJoin("users as u", "u.id", "e.actor_id")
    .select([
      "e.id",
      "e.seq",
      "e.at",
      "e.kind",
      "e.subject_type as subjectType",
      "e.subject_id as subjectId",
      "e.payload",
      "e.hash",
      "u.name as actorName",
    ])
    .where("e.disc_id", "=", discId)
    .orderBy("e.seq", "desc")
    .execute();
  return rows;
}
