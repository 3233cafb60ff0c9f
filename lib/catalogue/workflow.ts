import "server-only";
import { sql, type Transaction } from "kysely";
import { db } from "../../db";
import type { Database, SideStatus } from "../../db/types";
import { type Action, can } from "../auth/permissions";
import type { SessionUser } from "../auth/session-user";
import { AppError } from "../http/errors";
import { enqueueMail } from "../mail/outbox";
import { env } from "../env";
import { appendEvent, appendEvents, type NewEvent } from "../provenance";
import { decideReview } from "../review";
import { assignSchema, statusLabels, transitionSchema } from "../validation/catalogue";

/**
 * A side's path through the lab. Each step names the action (from the permission table)
 * that allows it and how it happens: most steps follow from the work itself (an
 * assignment, a curve choice, an accepted upload, a finished render, a curator's
 * review); only submitting for review is a plain step. No step may be skipped.
 */
export type StepVia = "assignment" | "curve choice" | "upload" | "render" | "submit" | "review";

export const transitions: ReadonlyArray<{ from: SideStatus; to: SideStatus; action: Action; via: StepVia; assignedOnly?: boolean; reasonRequired?: boolean }> = [
  { from: "catalogued", to: "assigned", action: "catalogue:assign", via: "assignment" },
  { from: "returned", to: "assigned", action: "catalogue:assign", via: "assignment" },
  { from: "assigned", to: "curve_chosen", action: "bench:use", via: "curve choice", assignedOnly: true },
  { from: "returned", to: "curve_chosen", action: "bench:use", via: "curve choice", assignedOnly: true },
  { from: "curve_chosen", to: "transferred", action: "bench:use", via: "upload", assignedOnly: true },
  { from: "transferred", to: "rendered", action: "bench:use", via: "render", assignedOnly: true },
  { from: "rendered", to: "in_review", action: "bench:use", via: "submit", assignedOnly: true },
  { from: "in_review", to: "approved", action: "review:decide", via: "review" },
  { from: "in_review", to: "returned", action: "review:decide", via: "review", reasonRequired: true },
];

const howItHappens: Record<Exclude<StepVia, "submit" | "review">, string> = {
  assignment: "through an assignment, which names the engineer",
  "curve choice": "when its curve is chosen on the bench, with a rationale",
  upload: "when its flat transfer is uploaded and accepted",
  render: "when its access copy has been rendered",
};

export function nextSteps(status: SideStatus): SideStatus[] {
  return transitions.filter((t) => t.from === status).map((t) => t.to);
}

async function lockSide(trx: Transaction<Database>, sideId: string) {
  if (!/^[0-9a-f-]{36}$/i.test(sideId)) throw new AppError("not_found", 404, "No such side.");
  const side = await trx
    .selectFrom("sides")
    .select(["id", "disc_id", "designation", "status", "assigned_engineer_id", "version"])
    .where("id", "=", sideId)
    .forUpdate()
    .executeTakeFirst();
  if (!side) throw new AppError("not_found", 404, "No such side.");
  return side;
}

/** Moves a side one step along its path, checked here on the server, with its event. */
export async function transitionSide(actor: SessionUser, sideId: string, input: unknown): Promise<{ status: SideStatus }> {
  const { to, reason } = transitionSchema.parse(input);
  // Approving and returning are the curator's review, with its own checks.
  if (to === "approved" || to === "returned") {
    if (!can(actor.role, "review:decide")) throw new AppError("forbidden", 403, "Only a curator approves or returns a side.");
    return decideReview(actor, sideId, { decision: to, reason });
  }
  return db.transaction().execute(async (trx) => {
    const side = await lockSide(trx, sideId);
    const step = transitions.find((t) => t.from === side.status && t.to === to);
    if (!step) {
      const allowed = nextSteps(side.status).map((s) => statusLabels[s].toLowerCase());
      throw new AppError("conflict", 409, `A side that is ${statusLabels[side.status].toLowerCase()} cannot become ${statusLabels[to].toLowerCase()}${allowed.length ? `; next is ${allowed.join(" or ")}` : ""}.`);
    }
    if (step.via !== "submit" && step.via !== "review") {
      throw new AppError("conflict", 409, `A side becomes ${statusLabels[to].toLowerCase()} ${howItHappens[step.via]}.`);
    }
    if (!can(actor.role, step.action)) throw new AppError("forbidden", 403, `Your role may not move a side from ${statusLabels[side.status].toLowerCase()} to ${statusLabels[to].toLowerCase()}.`);
    if (step.assignedOnly && side.assigned_engineer_id !== actor.id) throw new AppError("forbidden", 403, "This side is assigned to another engineer.");
    await trx
      .updateTable("sides")
      .set({ status: to, version: side.version + 1, updated_at: sql`now()` })
      .where("id", "=", side.id)
      .execute();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "side.status_changed",
      subjectType: "side",
      subjectId: side.id,
      discId: side.disc_id,
      payload: { side: side.designation, before: { status: side.status }, after: { status: to } },
    });
    return { status: to };
  });
}

/**
 * Assigns sides (or every side of the given discs) to a transfer engineer: catalogued,
 * returned and already assigned sides move to "assigned"; sides further along are left
 * and reported. The engineer gets one e-mail through the outbox. All or nothing.
 */
export async function assignSides(actor: SessionUser, input: unknown): Promise<{ assigned: number; skipped: { sideId: string; reason: string }[] }> {
  const { engineerId, sideIds, discIds } = assignSchema.parse(input);
  return db.transaction().execute(async (trx) => {
    const engineer = await trx.selectFrom("users").select(["id", "name", "email", "role", "active"]).where("id", "=", engineerId).executeTakeFirst();
    if (!engineer || engineer.role !== "engineer" || !engineer.active) {
      throw new AppError("invalid", 422, "Choose an active transfer engineer.", { engineerId: ["Not an active transfer engineer."] });
    }
    let q = trx
      .selectFrom("sides as s")
      .innerJoin("discs as d", "d.id", "s.disc_id")
      .select(["s.id", "s.disc_id", "s.designation", "s.status", "s.assigned_engineer_id", "s.version", "d.shelf_mark"])
      .orderBy("d.shelf_mark")
      .orderBy("s.designation")
      .forUpdate();
    q = q.where((eb) => eb.or([...(sideIds.length ? [eb("s.id", "in", sideIds)] : []), ...(discIds.length ? [eb("s.disc_id", "in", discIds)] : [])]));
    const sides = await q.execute();
    const skipped: { sideId: string; reason: string }[] = [];
    const done: string[] = [];
    const events: NewEvent[] = [];
    for (const s of sides) {
      if (!["catalogued", "returned", "assigned"].includes(s.status)) {
        skipped.push({ sideId: s.id, reason: `${s.shelf_mark} side ${s.designation} is already ${statusLabels[s.status].toLowerCase()}` });
        continue;
      }
      if (s.status === "assigned" && s.assigned_engineer_id === engineerId) continue;
      await trx.updateTable("sides").set({ status: "assigned", assigned_engineer_id: engineerId, return_reason: null, version: s.version + 1, updated_at: sql`now()` }).where("id", "=", s.id).execute();
      events.push({
        actorId: actor.id,
        kind: "side.assigned",
        subjectType: "side",
        subjectId: s.id,
        discId: s.disc_id,
        payload: { side: s.designation, before: { status: s.status, engineerId: s.assigned_engineer_id }, after: { status: "assigned", engineerId, engineerName: engineer.name } },
      });
      done.push(`${s.shelf_mark} side ${s.designation}`);
    }
    // One lock and batched inserts for the whole assignment (it may cover thousands of sides).
    await appendEvents(trx, events);
    if (done.length) {
      await enqueueMail(trx, {
        to: engineer.email,
        subject: `${done.length} side${done.length === 1 ? "" : "s"} assigned to you at ${env().LAB_NAME}`,
        text: [`${actor.name} assigned these sides to you for transfer:`, "", ...done.slice(0, 200).map((d) => `  • ${d}`), ...(done.length > 200 ? [`  … and ${done.length - 200} more`] : []), "", `Your queue: ${env().APP_URL}/queue`].join("\n"),
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
    .select(["s.id", "s.designation", "s.matrix_number as matrixNumber", "s.title", "s.status", "s.return_reason as returnReason", "s.updated_at as updatedAt", "d.id as discId", "d.shelf_mark as shelfMark", "d.label_name as labelName", "d.catalogue_number as catalogueNumber", "d.format", "d.nominal_speed_rpm as nominalSpeedRpm"])
    .where("s.assigned_engineer_id", "=", engineerId)
    .where("s.status", "in", ["assigned", "curve_chosen", "transferred", "rendered", "returned"])
    .orderBy(sql`s.status = 'returned'`, "desc")
    .orderBy("s.updated_at")
    .execute();
}

export async function listEngineers() {
  return db.selectFrom("users").select(["id", "name"]).where("role", "=", "engineer").where("active", "=", true).orderBy("name").execute();
}

export async function listDiscEvents(discId: string) {
  const rows = await db
    .selectFrom("provenance_events as e")
    .leftJoin("users as u", "u.id", "e.actor_id")
    .select(["e.id", "e.seq", "e.at", "e.kind", "e.subject_type as subjectType", "e.subject_id as subjectId", "e.payload", "e.hash", "u.name as actorName"])
    .where("e.disc_id", "=", discId)
    .orderBy("e.seq", "desc")
    .execute();
  return rows;
}
