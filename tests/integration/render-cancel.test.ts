// Cancelling a render that is actually running: the worker notices at its next lease
// renewal or progress write, stops between blocks, removes its temporary files (and any
// object it stored), and records nothing more; the side stands where it stood.
import { promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { ListObjectsV2Command } from "@aws-sdk/client-s3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { renderTmpPrefix } from "@/lib/jobs/render-lease";
import { profile, workerChildPidFile } from "@/scripts/lib/stack";
import { api } from "../support/app";
import { testBucketClient } from "../support/bucket";
import { testDb } from "../support/db";
import { makeWav } from "../support/make-wav";
import {
  assignedDisc,
  chooseCurve,
  type LabCookies,
  labCookies,
  until,
  uploadTransfer,
} from "../support/pipeline";

const bucket = testBucketClient();
let c: LabCookies;

beforeAll(async () => {
  c = await labCookies();
}, 60_000);

afterAll(async () => {
  await testDb.destroy();
});

const renderRow = (id: string) =>
  testDb.selectFrom("renders").selectAll().where("id", "=", id).executeTakeFirstOrThrow();

async function tmpDirsOf(pid: number): Promise<string[]> {
  return (await fs.readdir(os.tmpdir())).filter((n) => n.startsWith(renderTmpPrefix(pid)));
}

describe("cancelling a running render", () => {
  it("stops the worker's render within seconds, leaves no file or object, records nothing more, and leaves the side as it stood", async () => {
    // Five minutes of mono, resampled to 192 kHz: a render that runs long enough to be cancelled
    // in the middle. Made first: seconds of work between two requests could outlast the app's keep-alive.
    const long = makeWav({ seconds: 300, channels: 1, seed: 5 });
    const { sideIds } = await assignedDisc(c, `CANCEL-RUNNING-${Date.now().toString(36)}`, ["A"]);
    const sideId = sideIds[0];
    await chooseCurve(c, sideIds);
    const up = await uploadTransfer(c, sideId, long, "long.wav");
    expect(up.done.status).toBe(201);
    const sideBefore = await testDb
      .selectFrom("sides")
      .select(["status", "current_transfer_id", "current_curve_choice_id", "current_render_id"])
      .where("id", "=", sideId)
      .executeTakeFirstOrThrow();

    const queued = await api("/api/renders", {
      cookie: c.engineer,
      method: "POST",
      body: { sideId, channelMode: "both", bitDepth: 24, sampleRateHz: 192_000 },
    });
    expect(queued.status).toBe(202);
    const renderId: string = queued.body.renderId;
    const running = await until(
      "the render under way",
      async () => {
        const r = await renderRow(renderId);
        if (r.status === "done") throw new Error("the render finished before it could be cancelled");
        return r.status === "running" && r.progress > 0.02 ? r : undefined;
      },
      120_000,
    );
    const workerPid = Number((await fs.readFile(workerChildPidFile(profile("test")), "utf8")).trim());
    expect(running.lease_owner).toContain(`:${workerPid}:`);
    expect(await tmpDirsOf(workerPid)).toHaveLength(1);

    // The bench offers the cancel on a running render that has not stalled.
    const listed = await api(`/api/sides/${sideId}/renders`, { cookie: c.engineer });
    expect(listed.body.renders.find((r: { id: string }) => r.id === renderId)).toMatchObject({
      status: "running",
      stalled: false,
    });
    const cancelled = await api(`/api/renders/${renderId}/cancel`, {
      cookie: c.engineer,
      method: "POST",
      body: {},
    });
    expect(cancelled.status).toBe(200);
    expect(cancelled.body).toEqual({ renderId, status: "cancelled" });
    const atCancel = await renderRow(renderId);
    expect(atCancel.progress).toBeLessThan(1);

    // The worker stops: its temporary folder goes within seconds (the lease is renewed every
    // 2 s in the test profile, progress written every half second), long before the render would end.
    const cancelledAt = Date.now();
    await until(
      "the worker to stop the render",
      async () => ((await tmpDirsOf(workerPid)).length === 0 ? true : undefined),
      15_000,
    );
    expect(Date.now() - cancelledAt).toBeLessThan(10_000);
    const log = path.join(profile("test").dir, "logs", "worker.log");
    await until(
      "the worker to log the stop",
      async () =>
        (await fs.readFile(log, "utf8")).includes(`render ${renderId}: stopped`) ? true : undefined,
      10_000,
    );

    // Nothing more is written to the render: no lease renewal, no progress, no result.
    await new Promise((r) => setTimeout(r, 5000));
    const after = await renderRow(renderId);
    expect(after).toMatchObject({
      status: "cancelled",
      lease_owner: null,
      object_key: null,
      sha256: null,
      bytes: null,
      worker_identity: null,
      error: "Cancelled by the engineer.",
    });
    expect(after.progress).toBe(atCancel.progress);
    expect(after.heartbeat_at).toEqual(atCancel.heartbeat_at);
    const objects = await bucket.send(
      new ListObjectsV2Command({ Bucket: process.env.S3_BUCKET, Prefix: `access/${sideId}/` }),
    );
    expect(objects.Contents ?? []).toEqual([]);
    const kinds = (
      await testDb
        .selectFrom("provenance_events")
        .select(["kind", "payload"])
        .where("subject_id", "=", sideId)
        .where("kind", "like", "side.render%")
        .orderBy("seq")
        .execute()
    ).map((e) => [e.kind, (e.payload as { was?: string; stalled?: boolean }).was ?? null]);
    expect(kinds).toEqual([
      ["side.render_requested", null],
      ["side.render_cancelled", "running"],
    ]);

    // The side stands where it stood, and may be rendered again at once (that one is cancelled too, queued or running).
    const sideAfter = await testDb
      .selectFrom("sides")
      .select(["status", "current_transfer_id", "current_curve_choice_id", "current_render_id"])
      .where("id", "=", sideId)
      .executeTakeFirstOrThrow();
    expect(sideAfter).toEqual(sideBefore);
    const again = await api("/api/renders", {
      cookie: c.engineer,
      method: "POST",
      body: { sideId, channelMode: "both", bitDepth: 24, sampleRateHz: 192_000 },
    });
    expect(again.status).toBe(202);
    expect(
      (
        await api(`/api/renders/${again.body.renderId}/cancel`, {
          cookie: c.engineer,
          method: "POST",
          body: {},
        })
      ).status,
    ).toBe(200);
    await until(
      "the second render to stop",
      async () => ((await tmpDirsOf(workerPid)).length === 0 ? true : undefined),
      15_000,
    );
    expect((await renderRow(again.body.renderId)).status).toBe("cancelled");
  }, 300_000);
});
