// The render job: streams a flat transfer from the bucket through the side's render
// filter into a Broadcast WAVE access copy, stores it beside the transfer and records
// the render. Runs in worker processes; no framework imports.
import { createHash } from "node:crypto";
import { createReadStream, promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { DeleteObjectCommand, PutObjectCommand } from "@aws-sdk/client-s3";
import { type Kysely, sql } from "kysely";
import type { Database } from "../../db/types";
import { readWavHeader, renderAccessCopy } from "../audio";
import {
  buildAnalogModel,
  designIirFromModel,
  designRenderFilterFromModel,
  type ResolvedCurve,
  resolveCurve,
  speedCorrectedSpec,
} from "../curves";
import { env } from "../env";
import { campaignOfRender, campaignRenderRecorded, campaignRenderStopped } from "../campaigns/progress";
import { captureCodingHistory } from "../equipment/describe";
import { equipmentOfTransfers } from "../equipment/transfer-equipment";
import { appendEvent } from "../provenance";
import { lockSide, renderFinished } from "../sides/lifecycle";
import { parseStored, type StoredRenderFilter, storedCurveSpecSchema } from "../validation/records";
import { fromStore } from "../storage/errors";
import { objectSource } from "../storage/objects";
import { s3 } from "../storage/s3";
import { softwareName } from "../version";
import { accessCopyKey, leaseTimes, renderTmpPrefix, workerIdentity } from "./render-lease";

/** The curve as the coding history records it: each corner's time constant as the filter uses it. */
function curveText(c: ResolvedCurve): string {
  const parts: string[] = [];
  for (const corner of [c.shelf, c.turnover, c.rolloff, c.highpass, c.ultrasonic]) {
    if (corner) parts.push(`${corner.parameter} ${corner.filterTauUs.toFixed(2)} us`);
  }
  if (c.flatBass) parts.push("flat bass");
  parts.push(`${c.reference.db} dB at ${c.reference.hz} Hz`);
  return parts.join("; ");
}

export interface RenderJobContext {
  db: Kysely<Database>;
  /** True on the queue's last attempt: a failure then is final. */
  finalAttempt: boolean;
}

/** The render lost its lease while it ran: cancelled by the engineer, or handed back after this worker stalled. */
class LeaseLost extends Error {
  constructor() {
    super("The render's lease was lost (cancelled, or handed back to the queue): stopped.");
    this.name = "LeaseLost";
  }
}

/**
 * Runs one render. "done": recorded; "skipped": nothing to do (finished, cancelled or held
 * by another worker already); "stopped": it lost its lease while running (the engineer
 * cancelled it, or it was handed back) and stopped, leaving no file and recording nothing.
 */
export async function runRenderJob(
  renderId: string,
  ctx: RenderJobContext,
): Promise<"done" | "skipped" | "stopped"> {
  const { db } = ctx;
  const job = await db
    .selectFrom("renders as r")
    .innerJoin("transfers as t", "t.id", "r.transfer_id")
    .innerJoin("curve_choices as c", "c.id", "r.curve_choice_id")
    .innerJoin("sides as s", "s.id", "r.side_id")
    .innerJoin("discs as d", "d.id", "s.disc_id")
    .select([
      "r.id",
      "r.status",
      "r.side_id as sideId",
      "r.channel_mode as channelMode",
      "r.bit_depth as bitDepth",
      "r.sample_rate_hz as outputRateHz",
      "r.requested_by as requestedBy",
      "r.created_at as createdAt",
      "t.id as transferId",
      "t.object_key as transferKey",
      "t.sha256 as transferSha256",
      "t.sample_rate_hz as sampleRateHz",
      "t.measured_speed_rpm as measuredSpeedRpm",
      "c.id as choiceId",
      "c.spec",
      "c.correct_speed as correctSpeed",
      "c.cut_speed_rpm as cutSpeedRpm",
      "c.transfer_speed_rpm as transferSpeedRpm",
      "s.designation",
      "s.disc_id as discId",
      "d.shelf_mark as shelfMark",
      "d.label_name as labelName",
      "d.catalogue_number as catalogueNumber",
    ])
    .where("r.id", "=", renderId)
    .executeTakeFirst();
  // Done, failed or cancelled already (a redelivered job): nothing to do twice.
  if (!job || (job.status !== "queued" && job.status !== "running")) return "skipped";

  // Take the lease: only a queued render, or a running one whose lease went stale (its
  // worker died before the sweep came by). A render another worker holds is left alone.
  const { RENDER_HEARTBEAT_SECONDS: heartbeatSeconds, RENDER_LEASE_STALE_SECONDS: staleSeconds } =
    leaseTimes();
  const owner = workerIdentity;
  const taken = await db
    .updateTable("renders")
    .set({
      status: "running",
      started_at: new Date(),
      heartbeat_at: new Date(),
      lease_owner: owner,
      progress: 0,
      error: null,
    })
    .where("id", "=", renderId)
    .where((eb) =>
      eb.or([
        eb("status", "=", "queued"),
        eb.and([
          eb("status", "=", "running"),
          eb(
            sql<Date>`coalesce(heartbeat_at, started_at, created_at)`,
            "<",
            sql<Date>`now() - make_interval(secs => ${staleSeconds})`,
          ),
        ]),
      ]),
    )
    .executeTakeFirst();
  if (Number(taken.numUpdatedRows) === 0) return "skipped";
  const held = () =>
    db
      .selectFrom("renders")
      .select("id")
      .where("id", "=", renderId)
      .where("status", "=", "running")
      .where("lease_owner", "=", owner)
      .executeTakeFirst();
  // The lease is renewed while the render runs. A lost lease (the engineer cancelled the
  // render, or it was handed back after this worker stalled) is noticed at the renewal or
  // at the next progress write, whichever comes first: the render stops between blocks,
  // an upload under way is aborted, and nothing more is recorded.
  const tmp = await fs.mkdtemp(path.join(os.tmpdir(), renderTmpPrefix()));
  const outputPath = path.join(tmp, "access.wav");
  const lease = new AbortController();
  const loseLease = () => {
    if (!lease.signal.aborted) lease.abort(new LeaseLost());
  };
  const key = accessCopyKey(job.sideId, renderId);
  let stored = false;
  const heartbeat = setInterval(() => {
    db.updateTable("renders")
      .set({ heartbeat_at: new Date() })
      .where("id", "=", renderId)
      .where("status", "=", "running")
      .where("lease_owner", "=", owner)
      .executeTakeFirst()
      .then((r) => {
        if (Number(r.numUpdatedRows) === 0) loseLease();
      })
      .catch((err) =>
        console.error(
          `[render ${renderId}] could not renew the lease: ${err instanceof Error ? err.message : String(err)}`,
        ),
      );
  }, heartbeatSeconds * 1000);
  try {
    const spec = parseStored(storedCurveSpecSchema, job.spec, {
      table: "curve_choices",
      id: job.choiceId,
      column: "spec",
    });
    // Speed correction: the filter keeps the corners where the transfer has them (speed ratio
    // transfer ÷ cut) and is levelled at the reference as the corrected copy will play it; the
    // render then resamples by cut ÷ transfer, so the curve lands at the cut speed (lib/audio/render.ts).
    const speedCorrection = job.correctSpeed
      ? { cutSpeedRpm: Number(job.cutSpeedRpm), transferSpeedRpm: Number(job.transferSpeedRpm) }
      : undefined;
    const filterSpec = speedCorrection ? speedCorrectedSpec(spec) : spec;
    // One resolved curve and model for the render filter, the coding history and the recorded sections.
    const curve = resolveCurve(filterSpec);
    const model = buildAnalogModel(curve);
    const filter = designRenderFilterFromModel(model, job.sampleRateHz);
    const outputRateHz = job.outputRateHz ?? job.sampleRateHz;
    // The bext fields are ASCII (transliterated by the writer); the full text goes in an iXML chunk and the render's record.
    const description = `${job.shelfMark} side ${job.designation}: ${[job.labelName, job.catalogueNumber].filter(Boolean).join(" ")}. Equalized access copy.`;
    const source = await objectSource(job.transferKey);
    const header = await readWavHeader(source);
    // The items the transfer was made with (the register's chain): the analogue-source and A/D lines.
    const equipment = (await equipmentOfTransfers(db, [job.transferId])).get(job.transferId);
    const captureHistory = equipment?.items.length
      ? captureCodingHistory(equipment.items, {
          sampleRateHz: header.sampleRateHz,
          bitsPerSample: header.bitsPerSample,
          channels: header.channels,
          encoding: header.format,
          measuredSpeedRpm: job.measuredSpeedRpm,
        })
      : undefined;
    let lastWrite = 0;
    // The render's own creation time, not the clock: a render taken up again after its
    // worker died writes the same bytes under the same key.
    const now = new Date(job.createdAt);
    const result = await renderAccessCopy({
      source,
      header,
      filter,
      outputPath,
      channelMode: job.channelMode,
      output: { format: "pcm", bitsPerSample: job.bitDepth },
      outputSampleRateHz: outputRateHz,
      speedCorrection,
      keepInMemoryBytes: env().RENDER_MEMORY_MIB * 2 ** 20,
      bext: {
        description: description.slice(0, 256),
        originator: env().LAB_NAME.slice(0, 32),
        originatorReference: `RB${renderId.replace(/-/g, "").slice(0, 30)}`,
        originationDate: now.toISOString().slice(0, 10),
        originationTime: now.toISOString().slice(11, 19),
        timeReference: header.bext?.timeReference ?? 0,
      },
      unicodeText: { project: env().LAB_NAME, note: description },
      captureHistory,
      // The curve as chosen (levelled at its own reference; the speed correction is its own line item).
      equalization: {
        curve: curveText(speedCorrection ? resolveCurve(spec) : curve),
        speedRatio: curve.speedRatio,
        software: softwareName(),
      },
      // Called between blocks: an error thrown here ends the render and removes its file.
      onProgress: (fraction) => {
        if (lease.signal.aborted) throw lease.signal.reason;
        const t = Date.now();
        if (t - lastWrite < 500 && fraction < 1) return;
        lastWrite = t;
        db.updateTable("renders")
          .set({ progress: fraction })
          .where("id", "=", renderId)
          .where("status", "=", "running")
          .where("lease_owner", "=", owner)
          .executeTakeFirst()
          .then((r) => {
            if (Number(r.numUpdatedRows) === 0) loseLease();
          })
          .catch(() => undefined);
      },
    });
    // The key is the server's own, the same on every attempt. The access copy goes up in
    // one PutObject of the finished file: the bucket stores an object only when the whole
    // body arrived, so a worker killed during the upload leaves no partial object.
    if (lease.signal.aborted || !(await held())) throw new LeaseLost();
    stored = true;
    await fromStore(`store the access copy ${key}`, () =>
      s3().send(
        new PutObjectCommand({
          Bucket: env().S3_BUCKET,
          Key: key,
          Body: createReadStream(outputPath),
          ContentLength: result.outputBytes,
          ContentType: "audio/wav",
        }),
        { abortSignal: lease.signal },
      ),
    );
    const iir = designIirFromModel(model, job.sampleRateHz);
    const filterRecord: StoredRenderFilter = {
      kind: filter.kind,
      taps: filter.taps.length,
      tapsSha256: createHash("sha256")
        .update(Buffer.from(Float64Array.from(filter.taps).buffer))
        .digest("hex"),
      delaySamples: filter.delaySamples,
      maxErrorDb: filter.maxErrorDb,
      maxPhaseErrorDeg: filter.maxPhaseErrorDeg,
      sampleRateHz: job.sampleRateHz,
      // The same curve as second-order sections, for anyone who redoes the render elsewhere.
      sections: iir.sos,
      spec,
      // The curve the filter ran, when speed correction moved its reference with the corners.
      ...(speedCorrection ? { filterSpec } : {}),
      // Speed corrected: by what factor (cut ÷ transfer), from which rate the copy was resampled.
      ...(result.speedCorrection ? { speedCorrection: result.speedCorrection } : {}),
      software: softwareName(),
      // Which implementation of the same arithmetic ran (lib/audio/dsp.ts): native FFTW or JavaScript.
      engine: result.engine,
    };
    const recorded = await db.transaction().execute(async (trx) => {
      // Locks in the lab's one order, the side, then the render, then the log (as a request or
      // a cancel of a render, and a fixity result, take them): taken in another order, two
      // workers recording at once could each wait on the other.
      await lockSide(trx, job.sideId);
      // Recorded once: only by the worker still holding the running render's lease.
      const finished = await trx
        .updateTable("renders")
        .set({
          status: "done",
          progress: 1,
          object_key: key,
          sha256: result.sha256,
          bytes: result.outputBytes,
          trim_db: result.trimDb,
          peak_dbfs: result.peakDbfs,
          filter: JSON.stringify(filterRecord),
          finished_at: new Date(),
          lease_owner: null,
          worker_identity: owner,
        })
        .where("id", "=", renderId)
        .where("status", "=", "running")
        .where("lease_owner", "=", owner)
        .executeTakeFirst();
      if (Number(finished.numUpdatedRows) === 0) return false;
      // A render a re-render campaign queued names it (its row lock taken before the log's).
      const campaign = await campaignOfRender(trx, renderId, { lock: true });
      await appendEvent(trx, {
        actorId: job.requestedBy,
        kind: "side.rendered",
        subjectType: "side",
        subjectId: job.sideId,
        discId: job.discId,
        payload: {
          side: job.designation,
          renderId,
          transfer: { id: job.transferId, sha256: job.transferSha256 },
          curveChoiceId: job.choiceId,
          accessCopy: {
            objectKey: key,
            sha256: result.sha256,
            bytes: result.outputBytes,
            container: result.container,
            bitDepth: job.bitDepth,
            sampleRateHz: outputRateHz,
            channelMode: job.channelMode,
          },
          description,
          trimDb: result.trimDb,
          peakDbfs: result.peakDbfs,
          speedCorrection: result.speedCorrection,
          filter: filterRecord,
          codingHistory: result.codingHistory,
          ...(campaign ? { campaignId: campaign.campaignId } : {}),
        },
      });
      // Current only if it was made from the side's current transfer and curve; otherwise superseded (lib/sides).
      const taken = await renderFinished(
        trx,
        { id: job.requestedBy, role: null },
        { id: renderId, sideId: job.sideId, transferId: job.transferId, curveChoiceId: job.choiceId },
        campaign ? { campaignId: campaign.campaignId } : {},
      );
      // The campaign's side is done (sent back to review when it had been finished work) or failed.
      if (campaign) await campaignRenderRecorded(trx, campaign, taken);
      return true;
    });
    if (!recorded) throw new LeaseLost();
    return "done";
  } catch (err) {
    if (err instanceof LeaseLost || lease.signal.aborted) {
      // Cancelled or handed back while running: stop quietly (the queue's job is complete;
      // a handed-back render has a job of its own again). The object, if it went up, is
      // removed unless another worker now holds the render and will store the same key.
      if (stored) await removeUnrecorded(db, renderId, key);
      return "stopped";
    }
    // An unreachable store (../storage/errors) says so in plain words; the queue tries the render again.
    const message = err instanceof Error ? err.message : String(err);
    await db
      .transaction()
      .execute(async (trx) => {
        const marked = await trx
          .updateTable("renders")
          .set({
            status: ctx.finalAttempt ? "failed" : "queued",
            lease_owner: null,
            error: ctx.finalAttempt ? message : `${message} It will be tried again shortly.`,
            ...(ctx.finalAttempt ? { finished_at: new Date() } : {}),
          })
          .where("id", "=", renderId)
          .where("status", "=", "running")
          .where("lease_owner", "=", owner)
          .executeTakeFirst();
        // A campaign's side fails with the render's reason, for a retry from the campaign's page.
        if (!ctx.finalAttempt || Number(marked.numUpdatedRows) === 0) return;
        const campaign = await campaignOfRender(trx, renderId, { lock: true });
        if (campaign) await campaignRenderStopped(trx, campaign, `Its render failed: ${message}`);
      })
      .catch(() => undefined);
    if (stored && ctx.finalAttempt) await removeUnrecorded(db, renderId, key);
    throw err;
  } finally {
    clearInterval(heartbeat);
    await fs.rm(tmp, { recursive: true, force: true });
  }
}

/**
 * Removes an access copy this worker stored but did not record, when the render will never
 * be recorded (cancelled or failed). A render queued again or running elsewhere keeps the
 * key: its worker stores the same bytes there; a done one is someone's record.
 */
async function removeUnrecorded(db: Kysely<Database>, renderId: string, key: string): Promise<void> {
  try {
    const row = await db.selectFrom("renders").select("status").where("id", "=", renderId).executeTakeFirst();
    if (row && row.status !== "cancelled" && row.status !== "failed") return;
    await s3().send(new DeleteObjectCommand({ Bucket: env().S3_BUCKET, Key: key }));
  } catch (err) {
    console.error(
      `[render ${renderId}] could not remove its unrecorded object ${key}: ${err instanceof Error ? err.message : String(err)}`,
    );
  }
}
