// The worker process: sends the outbox and runs the queue's long work (renders of
// access copies). Several workers may run against one database and bucket: mail is
// claimed under a row lock, and pg-boss hands each job to exactly one worker, retrying
// it after a crash or a failure.
import "./lib/demo-env";
import { createDb } from "../db/client";
import { sql } from "kysely";
import { defaultDsp } from "../lib/audio/dsp";
import { env } from "../lib/env";
import { dueObjects, fixityCycleDays, type FixityJob, runFixityJob } from "../lib/fixity";
import {
  CHAIN_CHECKPOINT_CRON,
  CHAIN_CHECKPOINT_QUEUE,
  createBoss,
  createMissingQueues,
  FIXITY_BATCH,
  FIXITY_QUEUE,
  FIXITY_SWEEP_CRON,
  FIXITY_SWEEP_QUEUE,
  fixityJobKey,
  RENDER_QUEUE,
} from "../lib/jobs/boss";
import { releaseStaleDeliveries } from "../lib/exports/delivery-lease";
import { runRenderJob } from "../lib/jobs/render-job";
import {
  leaseTimes,
  releaseStaleRenders,
  removeStaleRenderTmp,
  workerIdentity,
} from "../lib/jobs/render-lease";
import { deliverDueMail } from "../lib/mail/outbox";
import { StoreUnreachableError } from "../lib/storage/errors";
import { takeCheckpoint } from "../lib/provenance/checkpoints";
import { createMailTransport } from "../lib/mail/transport";

const db = createDb(env().DATABASE_URL, 4);
const transport = createMailTransport(env().SMTP_URL);
const boss = createBoss(env().DATABASE_URL, "worker");
let stopping = false;

async function mailLoop(): Promise<void> {
  while (!stopping) {
    try {
      const { sent, failed } = await deliverDueMail(db, transport, env().MAIL_FROM);
      if (sent || failed) console.log(`[worker] mail: ${sent} sent, ${failed} failed`);
    } catch (err) {
      console.error("[worker] mail round failed:", err);
    }
    await new Promise((r) => setTimeout(r, 1000));
  }
}

/**
 * Every worker looks for renders whose worker died (a stale lease) and sends them to the
 * render queue again, so another worker, or this one, takes them up and finishes them.
 * Bag deliveries whose server stopped mid-way are closed as stopped, their folder emptied.
 * A round that fails (the database away) is logged and the next one tries again.
 */
async function leaseSweepLoop(): Promise<void> {
  const { RENDER_SWEEP_SECONDS: every, RENDER_LEASE_STALE_SECONDS: stale } = leaseTimes();
  while (!stopping) {
    await new Promise((r) => setTimeout(r, every * 1000));
    if (stopping) break;
    try {
      for (const renderId of await releaseStaleRenders(db, stale)) {
        await boss.send(RENDER_QUEUE, { renderId });
        console.log(
          `[worker] render ${renderId}: its worker stopped renewing the lease; handed back to the queue`,
        );
      }
      for (const d of await releaseStaleDeliveries(db, stale))
        console.log(
          `[worker] delivery ${d.id}: its server stopped writing s3://${d.bucket}/${d.prefix}; closed as stopped`,
        );
    } catch (err) {
      console.error("[worker] lease sweep failed:", err instanceof Error ? err.message : err);
    }
  }
}

async function main(): Promise<void> {
  console.log(
    `[worker] started as ${workerIdentity}, sending mail through ${new URL(env().SMTP_URL).host}; renders run on the ${defaultDsp().name} engine`,
  );
  // A killed worker cannot remove its render's temporary folder: the next one does.
  for (const dir of await removeStaleRenderTmp())
    console.log(`[worker] removed a stale render folder ${dir}`);
  await boss.start();
  await createMissingQueues(boss);
  await boss.work<{ renderId: string }>(
    RENDER_QUEUE,
    { batchSize: 1, includeMetadata: true, pollingIntervalSeconds: 1 },
    async ([job]) => {
      const finalAttempt = job.retryCount >= job.retryLimit;
      console.log(
        `[worker] render ${job.data.renderId} (attempt ${job.retryCount + 1} of ${job.retryLimit + 1})`,
      );
      try {
        const outcome = await runRenderJob(job.data.renderId, { db, finalAttempt });
        console.log(`[worker] render ${job.data.renderId}: ${outcome}`);
      } catch (err) {
        // An unreachable store says so in plain words (lib/storage/errors); the queue tries again.
        console.error(
          `[worker] render ${job.data.renderId} failed${finalAttempt ? "" : " (the queue tries it again)"}:`,
          err instanceof Error ? err.message : err,
        );
        throw err;
      }
    },
  );
  // Fixity: an hourly sweep queues every object whose last check is older than the
  // lab's cycle; each object is one job (singleton per object), so several workers
  // share the work and never check an object twice at once.
  await boss.schedule(FIXITY_SWEEP_QUEUE, FIXITY_SWEEP_CRON);
  // The database's time before reading what is due: a check recorded after it (a curator's,
  // running meanwhile) stands, and the sweep's job for that object is then not run again.
  await boss.work(FIXITY_SWEEP_QUEUE, async () => {
    const { rows } = await sql<{ now: Date }>`SELECT now() AS now`.execute(db);
    const dueSince = rows[0].now.toISOString();
    const due = await dueObjects(db, await fixityCycleDays(db));
    for (const o of due)
      await boss.send(FIXITY_QUEUE, { kind: o.kind, id: o.id, dueSince } satisfies FixityJob, {
        singletonKey: fixityJobKey(o),
      });
    if (due.length) console.log(`[worker] fixity sweep queued ${due.length} objects`);
  });
  // Checks are taken a batch at a time (pg-boss fetches once a second per worker), each
  // recorded on its own: one that fails is handed back for its retry alone, the others complete.
  await boss.work<FixityJob>(
    FIXITY_QUEUE,
    { batchSize: FIXITY_BATCH, pollingIntervalSeconds: 1 },
    async (jobs) => {
      for (const job of jobs) {
        try {
          const outcome = await runFixityJob(db, job.data, { worker: workerIdentity });
          console.log(`[worker] fixity ${job.data.kind} ${job.data.id}: ${outcome}`);
        } catch (err) {
          // An unreachable store is not a fixity result: nothing recorded, no one alarmed;
          // the check is handed back for its retry alone.
          const message = err instanceof Error ? err.message : String(err);
          console.error(
            err instanceof StoreUnreachableError
              ? `[worker] fixity ${job.data.kind} ${job.data.id}: not checked: ${message}`
              : `[worker] fixity ${job.data.kind} ${job.data.id} failed: ${message}`,
          );
          await boss.fail(FIXITY_QUEUE, job.id, { message });
        }
      }
    },
  );
  // The provenance chain is anchored daily, and whenever a curator or an admin asks: a
  // checkpoint object in the bucket, never overwritten, mailed to the curators.
  await boss.schedule(
    CHAIN_CHECKPOINT_QUEUE,
    CHAIN_CHECKPOINT_CRON,
    { reason: "scheduled" },
    { singletonKey: "chain-checkpoint" },
  );
  await boss.work<{ reason: "scheduled" | "requested"; requestedBy?: string }>(
    CHAIN_CHECKPOINT_QUEUE,
    { batchSize: 1, pollingIntervalSeconds: 1 },
    async ([job]) => {
      const outcome = await takeCheckpoint(db, {
        reason: job.data.reason === "requested" ? "requested" : "scheduled",
        requestedBy: job.data.requestedBy ?? null,
      });
      const detail =
        outcome.status === "written"
          ? ` ${outcome.key} (${outcome.checkpoint.events} entries, mailed to ${outcome.mailedTo} curators)`
          : outcome.status === "refused"
            ? ": the chain did not verify, curators told"
            : "";
      console.log(`[worker] chain checkpoint: ${outcome.status}${detail}`);
    },
  );
  console.log("[worker] ready: working the render, fixity and checkpoint queues");
  await Promise.all([mailLoop(), leaseSweepLoop()]);
}

async function shutdown(): Promise<void> {
  if (stopping) return;
  stopping = true;
  await boss.stop({ graceful: true, timeout: 10_000 }).catch(() => undefined);
  transport.close();
  await db.destroy();
  process.exit(0);
}

for (const signal of ["SIGTERM", "SIGINT"] as const) process.on(signal, () => void shutdown());
// A query that failed while the database was away must not end the worker: it is logged
// and the loops go on; pg-boss and the pool reconnect once the database is back.
process.on("unhandledRejection", (reason) => console.error("[worker] a background task failed:", reason));

main().catch((err) => {
  console.error("[worker] failed to start:", err);
  process.exit(1);
});
