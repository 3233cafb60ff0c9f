// The side lifecycle: the only code that changes `sides.status` and what a side stands on
// (its current flat transfer, curve choice and access copy). Every step anywhere in the lab
// is a row of `transitions`, with the permission-table action that allows it and the event
// it writes; the database holds the same steps (side_transitions, trigger
// sides_status_step) and refuses any other. No framework imports: the web app, the worker
// and the seed all call it inside the transaction of the change that causes the step.
import { sql, type Transaction } from "kysely";
import type { Database, SideStatus } from "../../db/types";
import { type Action, can } from "../auth/permissions";
import type { Role } from "../auth/roles";
import { AppError } from "../http/errors";
import { appendEvents, type NewEvent } from "../provenance";
import { curveChoosableStatuses, renderableStatuses, uploadableStatuses } from "../validation/transfers";

/** How a step happens. */
export type StepVia = "assignment" | "upload" | "curve choice" | "render" | "submit" | "review" | "campaign";

export interface Step {
  from: SideStatus;
  to: SideStatus;
  via: StepVia;
  /** The permission-table action the person taking the step needs. */
  action: Action;
  /** The provenance event the step writes. */
  event: "side.assigned" | "side.status_changed" | "side.approved" | "side.returned";
  /** What the step means, for the record and for error messages. */
  means: string;
  /** Only the engineer the side is assigned to takes it. */
  assignedOnly?: boolean;
  /** The step needs a reason (a curator's return). */
  reasonRequired?: boolean;
}

/**
 * Every step a side's status takes, in the archive's order: assigned → flat transfer
 * accepted → curve chosen → rendered → in review → approved or returned. A curve may be
 * recorded before the transfer (the side stays assigned); a new transfer or a new curve
 * makes a rendered side need its render again.
 */
export const transitions: readonly Step[] = [
  {
    from: "catalogued",
    to: "assigned",
    via: "assignment",
    action: "catalogue:assign",
    event: "side.assigned",
    means: "assigned to an engineer",
  },
  {
    from: "returned",
    to: "assigned",
    via: "assignment",
    action: "catalogue:assign",
    event: "side.assigned",
    means: "assigned again after a return",
  },
  {
    from: "assigned",
    to: "transferred",
    via: "upload",
    action: "bench:use",
    event: "side.status_changed",
    means: "its flat transfer was accepted",
    assignedOnly: true,
  },
  {
    from: "returned",
    to: "transferred",
    via: "upload",
    action: "bench:use",
    event: "side.status_changed",
    means: "a new flat transfer was accepted after the return",
    assignedOnly: true,
  },
  {
    from: "transferred",
    to: "curve_chosen",
    via: "curve choice",
    action: "bench:use",
    event: "side.status_changed",
    means: "its playback curve was chosen",
    assignedOnly: true,
  },
  {
    from: "returned",
    to: "curve_chosen",
    via: "curve choice",
    action: "bench:use",
    event: "side.status_changed",
    means: "a new curve was chosen after the return",
    assignedOnly: true,
  },
  {
    from: "rendered",
    to: "curve_chosen",
    via: "curve choice",
    action: "bench:use",
    event: "side.status_changed",
    means: "the curve changed: the access copy must be rendered again",
    assignedOnly: true,
  },
  {
    from: "rendered",
    to: "curve_chosen",
    via: "upload",
    action: "bench:use",
    event: "side.status_changed",
    means: "a new flat transfer was accepted: the access copy must be rendered again",
    assignedOnly: true,
  },
  {
    from: "curve_chosen",
    to: "rendered",
    via: "render",
    action: "bench:use",
    event: "side.status_changed",
    means: "its access copy was rendered from the current transfer and curve",
    assignedOnly: true,
  },
  {
    from: "returned",
    to: "rendered",
    via: "render",
    action: "bench:use",
    event: "side.status_changed",
    means: "its access copy was rendered again after the return",
    assignedOnly: true,
  },
  {
    from: "rendered",
    to: "in_review",
    via: "submit",
    action: "bench:use",
    event: "side.status_changed",
    means: "sent for review",
    assignedOnly: true,
  },
  // A re-render campaign (lib/campaigns): a corrected preset version re-chooses the curve of
  // sides that rested on the wrong one, approved and in-review sides included; their new
  // access copy is sent to review by the campaign once it is rendered.
  ...(["rendered", "returned", "in_review", "approved"] as const).map((from): Step => ({
    from,
    to: "curve_chosen",
    via: "campaign",
    action: "campaigns:run",
    event: "side.status_changed",
    means: "a re-render campaign chose the corrected curve: the access copy must be rendered again",
  })),
  {
    from: "rendered",
    to: "in_review",
    via: "campaign",
    action: "campaigns:run",
    event: "side.status_changed",
    means: "sent back to review by a re-render campaign, with its access copy made from the corrected curve",
  },
  {
    from: "in_review",
    to: "approved",
    via: "review",
    action: "review:decide",
    event: "side.approved",
    means: "approved by a curator",
  },
  {
    from: "in_review",
    to: "returned",
    via: "review",
    action: "review:decide",
    event: "side.returned",
    means: "returned by a curator",
    reasonRequired: true,
  },
];

export { curveChoosableStatuses, renderableStatuses, uploadableStatuses };

/**
 * Who takes a step. `role: null` is the render worker finishing a render that its
 * requester was allowed to ask for; it may take only render steps.
 */
export interface StepActor {
  id: string;
  role: Role | null;
}

/** A side as the lifecycle reads it, locked for the transaction. */
export interface LockedSide {
  id: string;
  disc_id: string;
  designation: string;
  status: SideStatus;
  version: number;
  assigned_engineer_id: string | null;
  current_transfer_id: string | null;
  current_curve_choice_id: string | null;
  current_render_id: string | null;
}

const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** Reads and locks the sides (in a stable order, so two transactions never deadlock). */
export async function lockSides(
  trx: Transaction<Database>,
  sideIds: readonly string[],
): Promise<LockedSide[]> {
  const ids = [...new Set(sideIds)].filter((id) => uuidPattern.test(id));
  if (!ids.length) return [];
  return trx
    .selectFrom("sides")
    .select([
      "id",
      "disc_id",
      "designation",
      "status",
      "version",
      "assigned_engineer_id",
      "current_transfer_id",
      "current_curve_choice_id",
      "current_render_id",
    ])
    .where("id", "in", ids)
    .orderBy("id")
    .forUpdate()
    .execute();
}

export async function lockSide(trx: Transaction<Database>, sideId: string): Promise<LockedSide> {
  const [side] = await lockSides(trx, [sideId]);
  if (!side) throw new AppError("not_found", 404, "No such side.");
  return side;
}

export function findStep(from: SideStatus, to: SideStatus, via: StepVia): Step | undefined {
  return transitions.find((t) => t.from === from && t.to === to && t.via === via);
}

type SideColumns = Partial<{
  assigned_engineer_id: string | null;
  return_reason: string | null;
  current_transfer_id: string | null;
  current_curve_choice_id: string | null;
  current_render_id: string | null;
}>;

/**
 * Writes the side's columns, and its status when `to` is given, checked against the
 * table and the actor's role. The status event goes to `events` (appended by the caller
 * with the rest of the change) or is appended at once.
 */
async function writeSide(
  trx: Transaction<Database>,
  side: LockedSide,
  actor: StepActor,
  change: { to?: SideStatus; via?: StepVia; set?: SideColumns; payload?: Record<string, unknown> },
  events: NewEvent[],
): Promise<void> {
  let step: Step | undefined;
  if (change.to && change.to !== side.status) {
    step = findStep(side.status, change.to, change.via!);
    if (!step)
      throw new AppError(
        "conflict",
        409,
        `A side that is ${side.status.replace("_", " ")} cannot become ${change.to.replace("_", " ")} by ${change.via}.`,
      );
    // The worker (role null) finishes renders, and the campaign steps of a campaign someone started.
    const allowed =
      actor.role === null ? step.via === "render" || step.via === "campaign" : can(actor.role, step.action);
    if (!allowed)
      throw new AppError(
        "forbidden",
        403,
        `Your role may not move a side from ${side.status.replace("_", " ")} to ${change.to.replace("_", " ")}.`,
      );
  }
  const set = { ...(change.set ?? {}), ...(step ? { status: step.to } : {}) };
  if (!Object.keys(set).length) return;
  await trx
    .updateTable("sides")
    .set({ ...set, version: side.version + 1, updated_at: sql`now()` })
    .where("id", "=", side.id)
    .execute();
  const before = side.status;
  Object.assign(side, change.set ?? {}, { version: side.version + 1 });
  if (step) {
    side.status = step.to;
    events.push({
      actorId: actor.id,
      kind: step.event,
      subjectType: "side",
      subjectId: side.id,
      discId: side.disc_id,
      payload: {
        side: side.designation,
        before: { status: before },
        after: { status: step.to },
        via: step.via,
        note: step.means,
        ...(change.payload ?? {}),
      },
    });
  }
}

async function flush(trx: Transaction<Database>, events: NewEvent[]): Promise<void> {
  if (events.length) await appendEvents(trx, events.splice(0));
}

/** Marks a render superseded (it stays, with its file and hash) and records why. */
async function supersede(
  trx: Transaction<Database>,
  side: LockedSide,
  renderId: string,
  reason: string,
  actorId: string,
  events: NewEvent[],
  extra: Record<string, unknown> = {},
): Promise<void> {
  const updated = await trx
    .updateTable("renders")
    .set({ superseded_at: sql`now()`, superseded_reason: reason })
    .where("id", "=", renderId)
    .where("superseded_at", "is", null)
    .returning("id")
    .executeTakeFirst();
  if (updated) {
    events.push({
      actorId,
      kind: "side.render_superseded",
      subjectType: "side",
      subjectId: side.id,
      discId: side.disc_id,
      payload: { side: side.designation, renderId, reason, ...extra },
    });
  }
}

/** Assigns a side to an engineer (a catalogued or returned side becomes assigned; an assigned one changes hands). */
export async function assignSide(
  trx: Transaction<Database>,
  actor: StepActor,
  side: LockedSide,
  engineer: { id: string; name: string },
  events: NewEvent[],
): Promise<void> {
  if (side.status === "assigned") {
    const before = side.assigned_engineer_id;
    await writeSide(
      trx,
      side,
      actor,
      { set: { assigned_engineer_id: engineer.id, return_reason: null } },
      events,
    );
    events.push({
      actorId: actor.id,
      kind: "side.assigned",
      subjectType: "side",
      subjectId: side.id,
      discId: side.disc_id,
      payload: {
        side: side.designation,
        before: { status: "assigned", engineerId: before },
        after: { status: "assigned", engineerId: engineer.id, engineerName: engineer.name },
      },
    });
    return;
  }
  const before = side.assigned_engineer_id;
  await writeSide(
    trx,
    side,
    actor,
    {
      to: "assigned",
      via: "assignment",
      set: { assigned_engineer_id: engineer.id, return_reason: null },
      payload: {
        before: { status: side.status, engineerId: before },
        after: { status: "assigned", engineerId: engineer.id, engineerName: engineer.name },
      },
    },
    events,
  );
}

/**
 * A flat transfer was accepted: it becomes the side's current one, the current access
 * copy (made from the old transfer) is superseded, and the side needs a render. A curve
 * recorded earlier stands for the new transfer.
 */
export async function transferAccepted(
  trx: Transaction<Database>,
  actor: StepActor,
  side: LockedSide,
  transferId: string,
): Promise<void> {
  if (!uploadableStatuses.has(side.status))
    throw new AppError("conflict", 409, `The side is ${side.status.replace("_", " ")}: no new transfer now.`);
  const events: NewEvent[] = [];
  if (side.current_render_id)
    await supersede(trx, side, side.current_render_id, "a new flat transfer was accepted", actor.id, events);
  const set: SideColumns = { current_transfer_id: transferId, current_render_id: null, return_reason: null };
  if (side.status === "assigned" || side.status === "returned") {
    await writeSide(
      trx,
      side,
      actor,
      { to: "transferred", via: "upload", set, payload: { transferId } },
      events,
    );
    if (side.current_curve_choice_id) {
      await writeSide(
        trx,
        side,
        actor,
        {
          to: "curve_chosen",
          via: "curve choice",
          payload: {
            curveChoiceId: side.current_curve_choice_id,
            note: "the curve recorded before this transfer stands",
          },
        },
        events,
      );
    }
  } else if (side.status === "rendered") {
    await writeSide(
      trx,
      side,
      actor,
      { to: "curve_chosen", via: "upload", set, payload: { transferId } },
      events,
    );
  } else {
    await writeSide(trx, side, actor, { set }, events);
  }
  await flush(trx, events);
}

/**
 * A curve was chosen: it becomes the side's current one, the current access copy (made
 * through the old curve) is superseded. Before any transfer the side stays assigned.
 */
export async function curveChosen(
  trx: Transaction<Database>,
  actor: StepActor,
  side: LockedSide,
  choiceId: string,
  events: NewEvent[],
): Promise<void> {
  if (!curveChoosableStatuses.has(side.status))
    throw new AppError(
      "conflict",
      409,
      `The side is ${side.status.replace("_", " ")}: its curve can no longer change.`,
    );
  if (side.current_render_id)
    await supersede(trx, side, side.current_render_id, "a new curve was chosen", actor.id, events);
  const set: SideColumns = {
    current_curve_choice_id: choiceId,
    current_render_id: null,
    return_reason: null,
  };
  const moves = side.current_transfer_id && side.status !== "curve_chosen" && side.status !== "assigned";
  await writeSide(
    trx,
    side,
    actor,
    moves ? { to: "curve_chosen", via: "curve choice", set, payload: { curveChoiceId: choiceId } } : { set },
    events,
  );
}

/**
 * A render finished (its row is already marked done in this transaction). It becomes the
 * side's access copy only if it was made from the side's current transfer and curve and
 * the side is still at the bench; otherwise it is recorded as superseded and the side
 * does not move. Returns whether it became current.
 */
export async function renderFinished(
  trx: Transaction<Database>,
  actor: StepActor,
  render: { id: string; sideId: string; transferId: string; curveChoiceId: string },
  /** Goes into the events the render's finishing writes (a campaign's render names the campaign). */
  extra: Record<string, unknown> = {},
): Promise<{ current: boolean; reason?: string }> {
  const side = await lockSide(trx, render.sideId);
  const events: NewEvent[] = [];
  let reason: string | undefined;
  if (render.transferId !== side.current_transfer_id)
    reason = "a newer flat transfer was accepted while it was being made";
  else if (render.curveChoiceId !== side.current_curve_choice_id)
    reason = "a new curve was chosen while it was being made";
  else if (!renderableStatuses.has(side.status))
    reason = `the side had moved on (${side.status.replace("_", " ")}) when it finished`;
  if (reason) {
    await supersede(trx, side, render.id, reason, actor.id, events, extra);
    await flush(trx, events);
    return { current: false, reason };
  }
  if (side.current_render_id && side.current_render_id !== render.id) {
    await supersede(
      trx,
      side,
      side.current_render_id,
      "replaced by a newer render of the same transfer and curve",
      actor.id,
      events,
    );
  }
  const set: SideColumns = { current_render_id: render.id, return_reason: null };
  await writeSide(
    trx,
    side,
    actor,
    side.status === "rendered"
      ? { set }
      : { to: "rendered", via: "render", set, payload: { renderId: render.id, ...extra } },
    events,
  );
  await flush(trx, events);
  return { current: true };
}

/** The engineer sends the side for review: it needs a current access copy and no render still running. */
export async function submitForReview(
  trx: Transaction<Database>,
  actor: StepActor,
  side: LockedSide,
): Promise<void> {
  if (side.status !== "rendered" || !side.current_render_id) {
    throw new AppError(
      "conflict",
      409,
      "A side goes to review with an access copy rendered from its current transfer and curve; render it first.",
    );
  }
  const busy = await trx
    .selectFrom("renders")
    .select("id")
    .where("side_id", "=", side.id)
    .where("status", "in", ["queued", "running"])
    .executeTakeFirst();
  if (busy)
    throw new AppError(
      "conflict",
      409,
      "A render of this side is still queued or running: wait for it to finish before sending the side for review.",
    );
  const events: NewEvent[] = [];
  await writeSide(
    trx,
    side,
    actor,
    {
      to: "in_review",
      via: "submit",
      payload: {
        renderId: side.current_render_id,
        transferId: side.current_transfer_id,
        curveChoiceId: side.current_curve_choice_id,
      },
    },
    events,
  );
  await flush(trx, events);
}

/**
 * A re-render campaign recorded a new curve choice from a correcting preset version: it
 * becomes the side's current one whatever stage the side had reached (approved and in
 * review included), the current access copy is superseded, and a side with a transfer
 * stands at "curve chosen" until the campaign's render. Every event names the campaign.
 */
export async function campaignCurveChosen(
  trx: Transaction<Database>,
  actor: StepActor,
  side: LockedSide,
  choiceId: string,
  campaignId: string,
  events: NewEvent[],
): Promise<void> {
  if (side.current_render_id)
    await supersede(
      trx,
      side,
      side.current_render_id,
      "a re-render campaign chose the corrected curve",
      actor.id,
      events,
      { campaignId },
    );
  const set: SideColumns = {
    current_curve_choice_id: choiceId,
    current_render_id: null,
    return_reason: null,
  };
  const moves = side.current_transfer_id && side.status !== "curve_chosen" && side.status !== "assigned";
  await writeSide(
    trx,
    side,
    actor,
    moves
      ? {
          to: "curve_chosen",
          via: "campaign",
          set,
          payload: { curveChoiceId: choiceId, campaignId },
        }
      : { set },
    events,
  );
}

/** A campaign's render of a side that had been finished work made it current: the side goes back to review. */
export async function campaignSubmitted(
  trx: Transaction<Database>,
  actor: StepActor,
  side: LockedSide,
  campaignId: string,
): Promise<void> {
  if (side.status !== "rendered" || !side.current_render_id)
    throw new AppError("conflict", 409, "The side has no current access copy to send to review.");
  const events: NewEvent[] = [];
  await writeSide(
    trx,
    side,
    actor,
    {
      to: "in_review",
      via: "campaign",
      payload: {
        renderId: side.current_render_id,
        transferId: side.current_transfer_id,
        curveChoiceId: side.current_curve_choice_id,
        campaignId,
      },
    },
    events,
  );
  await flush(trx, events);
}

/** The curator's decision moves the side; the review row and its payload are the caller's. */
export async function reviewDecided(
  trx: Transaction<Database>,
  actor: StepActor,
  side: LockedSide,
  decision: "approved" | "returned",
  reason: string | null,
  payload: Record<string, unknown>,
): Promise<void> {
  const events: NewEvent[] = [];
  await writeSide(
    trx,
    side,
    actor,
    {
      to: decision,
      via: "review",
      set: { return_reason: decision === "returned" ? reason : null },
      payload: { ...(reason ? { reason } : {}), ...payload },
    },
    events,
  );
  await flush(trx, events);
}
