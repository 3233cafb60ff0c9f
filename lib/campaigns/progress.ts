// How a re-render campaign moves on as its renders finish, fail or are cancelled. Called by
// the worker (lib/jobs/render-job.ts), the bench's render cancel and the campaign's own
// routes, each inside the transaction of the change it follows. No framework imports.
import { type Kysely, sql, type Transaction } from "kysely";
import type { CampaignSideState, Database, SideStatus } from "../../db/types";
import { env } from "../env";
import { enqueueMail } from "../mail/outbox";
import { appendEvent } from "../provenance";
import { campaignSubmitted, lockSide } from "../sides/lifecycle";

/** Sides that had been finished work (rendered, in review or approved) go back to review after a campaign's render. */
const finishedWork: ReadonlySet<SideStatus> = new Set(["rendered", "in_review", "approved"]);

/** The campaign a render was queued for, and its side's row. */
export interface RenderCampaign {
  campaignId: string;
  sideId: string;
  statusBefore: SideStatus;
  startedBy: string;
}

/**
 * The campaign (and its side's row) a render was queued for, if any. `lock` takes the
 * campaign's row lock: in the lab's lock order (side, render, campaign, then the log), so
 * callers that go on to append events take it here, before the log's lock.
 */
export async function campaignOfRender(
  db: Kysely<Database> | Transaction<Database>,
  renderId: string,
  opts: { lock?: boolean } = {},
): Promise<RenderCampaign | undefined> {
  const q = db
    .selectFrom("campaign_sides as cs")
    .innerJoin("campaigns as c", "c.id", "cs.campaign_id")
    .select([
      "cs.campaign_id as campaignId",
      "cs.side_id as sideId",
      "cs.status_before as statusBefore",
      "c.started_by as startedBy",
    ])
    .where("cs.render_id", "=", renderId)
    .where("cs.state", "=", "waiting");
  return (opts.lock ? q.forUpdate("c") : q).executeTakeFirst();
}

/** Counts of a campaign's sides by state. */
export async function campaignCounts(
  db: Kysely<Database> | Transaction<Database>,
  campaignId: string,
): Promise<Record<CampaignSideState, number>> {
  const rows = await db
    .selectFrom("campaign_sides")
    .select(["state", sql<number>`count(*)::int`.as("n")])
    .where("campaign_id", "=", campaignId)
    .groupBy("state")
    .execute();
  const counts = { waiting: 0, done: 0, failed: 0, cancelled: 0 };
  for (const r of rows) counts[r.state] = r.n;
  return counts;
}

/**
 * Finishes the campaign when no side waits any more (every one done, failed or cancelled):
 * its event, and, the first time only, a mail to every active curator. The campaign row is
 * locked, so two workers finishing its last two sides at once finish it once.
 */
export async function settleCampaign(trx: Transaction<Database>, campaignId: string): Promise<boolean> {
  const campaign = await trx
    .selectFrom("campaigns as c")
    .innerJoin("users as u", "u.id", "c.started_by")
    .select([
      "c.id",
      "c.title",
      "c.state",
      "c.started_by",
      "c.cancelled_at",
      "c.mailed_at",
      "u.name as startedByName",
    ])
    .where("c.id", "=", campaignId)
    .forUpdate("c")
    .executeTakeFirstOrThrow();
  if (campaign.state !== "running") return false;
  const counts = await campaignCounts(trx, campaignId);
  if (counts.waiting > 0) return false;
  await trx
    .updateTable("campaigns")
    .set({ state: "finished", finished_at: sql<Date>`now()` })
    .where("id", "=", campaignId)
    .execute();
  await appendEvent(trx, {
    actorId: campaign.started_by,
    kind: "campaign.finished",
    subjectType: "campaign",
    subjectId: campaignId,
    payload: { campaignId, title: campaign.title, cancelled: !!campaign.cancelled_at, counts },
  });
  if (!campaign.mailed_at) {
    const curators = await trx
      .selectFrom("users")
      .select("email")
      .where("role", "=", "curator")
      .where("active", "=", true)
      .execute();
    const total = counts.done + counts.failed + counts.cancelled;
    for (const c of curators) {
      await enqueueMail(trx, {
        to: c.email,
        subject: `Re-render campaign finished: ${campaign.title}`,
        text: [
          `The re-render campaign "${campaign.title}", started by ${campaign.startedByName}, has finished${campaign.cancelled_at ? " (it was cancelled)" : ""}.`,
          "",
          `${total} side${total === 1 ? "" : "s"}: ${counts.done} done, ${counts.failed} failed, ${counts.cancelled} cancelled.`,
          counts.done
            ? "Sides that had been finished work are back in review with access copies made from the corrected curve; each needs a curator who did not start the campaign."
            : "",
          counts.failed
            ? "The failed sides are listed on the campaign's page with their reasons, and can be retried there."
            : "",
          "",
          `${env().APP_URL}/campaigns/${campaignId}`,
        ]
          .filter((line, i, all) => line !== "" || all[i - 1] !== "")
          .join("\n"),
      });
    }
    await trx
      .updateTable("campaigns")
      .set({ mailed_at: sql<Date>`now()` })
      .where("id", "=", campaignId)
      .execute();
  }
  return true;
}

/**
 * A campaign's render was recorded (the worker's transaction, after lib/sides took it up).
 * Made current: the side is done, and one that had been finished work goes back to review.
 * Superseded (the side's curve or transfer changed meanwhile): the side fails, with why.
 */
export async function campaignRenderRecorded(
  trx: Transaction<Database>,
  /** What campaignOfRender found, its lock taken. */
  owner: RenderCampaign,
  result: { current: boolean; reason?: string },
): Promise<void> {
  let state: CampaignSideState = "done";
  let error: string | null = null;
  let outcome: string;
  if (!result.current) {
    state = "failed";
    error = `Its new access copy was not taken up: ${result.reason ?? "the side had moved on"}.`;
    outcome = "";
  } else if (finishedWork.has(owner.statusBefore)) {
    const side = await lockSide(trx, owner.sideId);
    await campaignSubmitted(trx, { id: owner.startedBy, role: null }, side, owner.campaignId);
    outcome = "rendered from the corrected curve and sent back to review";
  } else {
    outcome = "rendered from the corrected curve; the engineer sends it on";
  }
  await trx
    .updateTable("campaign_sides")
    .set({ state, error, outcome: state === "done" ? outcome : null, updated_at: sql<Date>`now()` })
    .where("campaign_id", "=", owner.campaignId)
    .where("side_id", "=", owner.sideId)
    .execute();
  await settleCampaign(trx, owner.campaignId);
}

/**
 * A campaign's render will not be made: it failed on its last attempt, or the engineer
 * cancelled it on the bench. The side fails with the reason, for a retry.
 */
export async function campaignRenderStopped(
  trx: Transaction<Database>,
  /** What campaignOfRender found, its lock taken. */
  owner: RenderCampaign,
  reason: string,
): Promise<void> {
  await trx
    .updateTable("campaign_sides")
    .set({ state: "failed", error: reason, outcome: null, updated_at: sql<Date>`now()` })
    .where("campaign_id", "=", owner.campaignId)
    .where("side_id", "=", owner.sideId)
    .execute();
  await settleCampaign(trx, owner.campaignId);
}
