import "server-only";
import { GetObjectCommand } from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { sql, type Transaction } from "kysely";
import { z } from "zod";
import { db } from "../../db";
import type { ChannelMode, Database } from "../../db/types";
import { equipmentWithCalibrations } from "../equipment/transfer-equipment";
import { channelModes } from "../audio/channel-mode";
import type { SessionUser } from "../auth/session-user";
import { env } from "../env";
import { attachmentDisposition } from "../http/content-disposition";
import { AppError } from "../http/errors";
import { RENDER_QUEUE } from "../jobs/boss";
import { accessCopyKey, leaseIsStale } from "../jobs/render-lease";
import { sendInTransaction } from "../jobs/web-boss";
import { campaignOfRender, campaignRenderStopped } from "../campaigns/progress";
import { appendEvent } from "../provenance";
import { type LockedSide, lockSide } from "../sides/lifecycle";
import { deleteObject } from "../storage/objects";
import { s3 } from "../storage/s3";
import { getSettings, type LabSettings } from "../settings";
import { parseStored, renderFilterRecordSchema } from "../validation/records";
import { accessCopyBitDepthSchema, accessCopyRateSchema, renderableStatuses } from "../validation/transfers";

export const renderRequestSchema = z.object({
  sideId: z.uuid({ error: "Unknown side." }),
  channelMode: z.enum(channelModes, { error: "Choose how the channels are used." }).default("both"),
  /** Default: the lab's setting. */
  bitDepth: accessCopyBitDepthSchema.optional(),
  /** "transfer" keeps the transfer's rate; default: the lab's setting. */
  sampleRateHz: accessCopyRateSchema.optional(),
});

/**
 * Queues a render of the side's current transfer through its current curve. The render
 * row, its event and the job are written in one transaction.
 */
export async function requestRender(actor: SessionUser, input: unknown) {
  const r = renderRequestSchema.parse(input);
  // Read before the transaction: a read through the pool inside it would hold one connection
  // while waiting for another, and enough requests at once would wait on each other for ever.
  const lab = await getSettings();
  return db.transaction().execute(async (trx) => {
    const side = await lockSide(trx, r.sideId);
    if (side.assigned_engineer_id !== actor.id)
      throw new AppError("forbidden", 403, "This side is not assigned to you.");
    return queueRender(trx, actor, side, r, lab);
  });
}

/**
 * Queues a render of a locked side's current transfer through its current curve, on the
 * render queue every render goes through: the render row, its job and its event in the
 * caller's transaction. The engineer's request and a re-render campaign both come here;
 * `extra` goes into the event (a campaign names itself).
 */
export async function queueRender(
  trx: Transaction<Database>,
  actor: { id: string },
  side: LockedSide,
  r: { channelMode: ChannelMode; bitDepth?: number; sampleRateHz?: number | "transfer" },
  /** The lab's settings (lib/settings), read before the caller's transaction. */
  lab: LabSettings,
  extra: Record<string, unknown> = {},
): Promise<{ renderId: string }> {
  {
    if (!renderableStatuses.has(side.status) || !side.current_transfer_id || !side.current_curve_choice_id) {
      throw new AppError(
        "conflict",
        409,
        side.status === "in_review" || side.status === "approved"
          ? `The side is ${side.status.replace("_", " ")}: nothing to render now.`
          : "A render needs the side's flat transfer and a chosen curve first.",
      );
    }
    // Always the side's current transfer and curve: what a render is made from is the lifecycle's record, not "the latest".
    const transfer = await trx
      .selectFrom("transfers")
      .select(["id", "channels", "sha256", "sample_rate_hz"])
      .where("id", "=", side.current_transfer_id)
      .executeTakeFirstOrThrow();
    const choice = { id: side.current_curve_choice_id };
    if (r.channelMode !== "both" && transfer.channels !== 2)
      throw new AppError("invalid", 422, "That channel choice needs a stereo transfer; this one is mono.", {
        channelMode: ["Needs a stereo transfer."],
      });
    const busy = await trx
      .selectFrom("renders")
      .select("id")
      .where("side_id", "=", side.id)
      .where("status", "in", ["queued", "running"])
      .executeTakeFirst();
    if (busy) throw new AppError("conflict", 409, "A render of this side is already queued or running.");
    const bitDepth = r.bitDepth ?? lab.accessCopyBitDepth;
    const rateChoice = r.sampleRateHz ?? lab.accessCopyRateHz;
    const sampleRateHz = rateChoice === "transfer" ? transfer.sample_rate_hz : rateChoice;
    const row = await trx
      .insertInto("renders")
      .values({
        side_id: side.id,
        transfer_id: transfer.id,
        curve_choice_id: choice.id,
        channel_mode: r.channelMode,
        bit_depth: bitDepth,
        sample_rate_hz: sampleRateHz,
        requested_by: actor.id,
      })
      .returning("id")
      .executeTakeFirstOrThrow();
    await sendInTransaction(trx, RENDER_QUEUE, { renderId: row.id });
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "side.render_requested",
      subjectType: "side",
      subjectId: side.id,
      discId: side.disc_id,
      payload: {
        side: side.designation,
        renderId: row.id,
        transferId: transfer.id,
        curveChoiceId: choice.id,
        channelMode: r.channelMode,
        bitDepth,
        sampleRateHz,
        ...extra,
      },
    });
    return { renderId: row.id };
  }
}

export async function listRenders(sideId: string) {
  return db
    .selectFrom("renders as r")
    .innerJoin("users as u", "u.id", "r.requested_by")
    .innerJoin("sides as s", "s.id", "r.side_id")
    .select([
      "r.id",
      "r.status",
      "r.progress",
      "r.channel_mode as channelMode",
      "r.bit_depth as bitDepth",
      "r.sample_rate_hz as sampleRateHz",
      "r.sha256",
      "r.bytes",
      "r.trim_db as trimDb",
      "r.peak_dbfs as peakDbfs",
      "r.filter",
      "r.error",
      "r.transfer_id as transferId",
      "r.curve_choice_id as curveChoiceId",
      "r.superseded_at as supersededAt",
      "r.superseded_reason as supersededReason",
      sql<boolean>`s.current_render_id IS NOT DISTINCT FROM r.id`.as("current"),
      "r.created_at as createdAt",
      "r.started_at as startedAt",
      "r.heartbeat_at as heartbeatAt",
      "r.finished_at as finishedAt",
      "u.name as requestedBy",
    ])
    .where("r.side_id", "=", sideId)
    .orderBy("r.created_at", "desc")
    .execute()
    .then((rows) => {
      const now = Date.now();
      return rows.map(({ startedAt, ...r }) => ({
        ...r,
        // Running, but its worker has not renewed the lease in time: it has stopped (lib/jobs/render-lease.ts).
        stalled: leaseIsStale({ status: r.status, heartbeatAt: r.heartbeatAt, startedAt }, now),
        filter:
          r.filter === null
            ? null
            : parseStored(renderFilterRecordSchema, r.filter, {
                table: "renders",
                id: r.id,
                column: "filter",
              }),
      }));
    });
}

/**
 * Cancels a queued or running render (a stalled one, or one still under way): only the
 * engineer the side is assigned to. The render is marked cancelled; a worker still running
 * it loses its lease, notices within seconds (lib/jobs/render-job.ts), stops, removes its
 * files and records nothing. The side stands where it stood and may be rendered again at once.
 */
export async function cancelRender(actor: SessionUser, renderId: string) {
  const id = z.uuid({ error: "Unknown render." }).parse(renderId);
  const cancelled = await db.transaction().execute(async (trx) => {
    const found = await trx.selectFrom("renders").select(["side_id"]).where("id", "=", id).executeTakeFirst();
    if (!found) throw new AppError("not_found", 404, "No such render.");
    const side = await lockSide(trx, found.side_id);
    if (side.assigned_engineer_id !== actor.id)
      throw new AppError("forbidden", 403, "This side is not assigned to you.");
    const r = await trx
      .selectFrom("renders")
      .select(["status", "progress", "heartbeat_at", "started_at"])
      .where("id", "=", id)
      .forUpdate()
      .executeTakeFirstOrThrow();
    if (r.status !== "queued" && r.status !== "running")
      throw new AppError("conflict", 409, `The render is ${r.status}: there is nothing to cancel.`);
    const stalled = leaseIsStale({ status: r.status, heartbeatAt: r.heartbeat_at, startedAt: r.started_at });
    // A render a re-render campaign queued: its campaign's row lock before the log's.
    const campaign = await campaignOfRender(trx, id, { lock: true });
    await trx
      .updateTable("renders")
      .set({
        status: "cancelled",
        lease_owner: null,
        error: stalled ? "Cancelled by the engineer: its worker had stopped." : "Cancelled by the engineer.",
        finished_at: new Date(),
      })
      .where("id", "=", id)
      .execute();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "side.render_cancelled",
      subjectType: "side",
      subjectId: side.id,
      discId: side.disc_id,
      payload: {
        side: side.designation,
        renderId: id,
        was: r.status,
        progress: r.progress,
        stalled,
        ...(campaign ? { campaignId: campaign.campaignId } : {}),
      },
    });
    // The campaign's side fails, for a retry from the campaign's page.
    if (campaign)
      await campaignRenderStopped(trx, campaign, "Its render was cancelled on the bench by the engineer.");
    return { renderId: id, sideId: side.id, status: "cancelled" as const };
  });
  // No one can record it now: an access copy a worker stored before it stopped (or before
  // it died) goes. The worker removes its own too, when it stores after this point.
  await deleteObject(accessCopyKey(cancelled.sideId, id)).catch((err) =>
    console.error(`[renders] could not remove the cancelled render's object: ${String(err)}`),
  );
  return { renderId: id, status: cancelled.status };
}

/** A side's transfers, newest first, each with the register's items it was made with and its chain's latest calibration then. */
export async function listTransfers(sideId: string) {
  const transfers = await db
    .selectFrom("transfers as t")
    .innerJoin("users as u", "u.id", "t.uploaded_by")
    .select([
      "t.id",
      "t.file_name as fileName",
      "t.sha256",
      "t.bytes",
      "t.container",
      "t.encoding",
      "t.bits_per_sample as bitsPerSample",
      "t.channels",
      "t.sample_rate_hz as sampleRateHz",
      "t.frames",
      "t.duration_seconds as durationSeconds",
      "t.bext",
      "t.stylus_size as stylusSize",
      "t.stylus_shape as stylusShape",
      "t.measured_speed_rpm as measuredSpeedRpm",
      "t.chain",
      "t.created_at as createdAt",
      "u.name as uploadedBy",
    ])
    .where("t.side_id", "=", sideId)
    .orderBy("t.created_at", "desc")
    .execute();
  const equipment = await equipmentWithCalibrations(
    db,
    transfers.map((t) => t.id),
  );
  return transfers.map((t) => ({ ...t, equipment: equipment.get(t.id) ?? null }));
}

/** The download is named from stored text (a shelf mark, an engineer's file name): made safe for a header whatever it holds. */
async function presignedGet(key: string, fileName: string): Promise<string> {
  return getSignedUrl(
    s3(),
    new GetObjectCommand({
      Bucket: env().S3_BUCKET,
      Key: key,
      ResponseContentDisposition: attachmentDisposition(fileName, "transfer.wav"),
    }),
    { expiresIn: 3600 },
  );
}

/** A short-lived URL to a transfer (flat) or an access copy, for download or for playback by byte ranges. */
export async function downloadUrl(kind: "transfer" | "render", id: string): Promise<string> {
  if (kind === "transfer") {
    const t = await db
      .selectFrom("transfers")
      .select(["object_key", "file_name"])
      .where("id", "=", id)
      .executeTakeFirst();
    if (!t) throw new AppError("not_found", 404, "No such transfer.");
    return presignedGet(t.object_key, t.file_name);
  }
  const r = await db
    .selectFrom("renders as r")
    .innerJoin("sides as s", "s.id", "r.side_id")
    .innerJoin("discs as d", "d.id", "s.disc_id")
    .select(["r.object_key", "r.status", "d.shelf_mark", "s.designation"])
    .where("r.id", "=", id)
    .executeTakeFirst();
  if (!r || r.status !== "done" || !r.object_key)
    throw new AppError("not_found", 404, "That access copy is not ready.");
  return presignedGet(r.object_key, `${r.shelf_mark}-${r.designation}-access.wav`);
}
