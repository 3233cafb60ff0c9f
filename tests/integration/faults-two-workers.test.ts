// Fault drill: two workers against one database and one bucket. The test profile runs one
// worker (under its supervisor); the drill starts a second by its own PID, queues 20
// renders and 200 fixity checks at once, and shows that each was done exactly once (one
// access copy per render, one result per check, no event twice) and that both workers
// did some. The second worker is stopped by its PID at the end.
import { promises as fs } from "node:fs";
import path from "node:path";
import { ListObjectsV2Command, PutObjectCommand } from "@aws-sdk/client-s3";
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { workerChildPidFile, profile } from "@/scripts/lib/stack";
import { api } from "../support/app";
import { testBucketClient } from "../support/bucket";
import { testDb } from "../support/db";
import { makeWav } from "../support/make-wav";
import {
  assignedDisc,
  chooseCurve,
  type LabCookies,
  labCookies,
  sha256Of,
  until,
  uploadTransfer,
} from "../support/pipeline";
import { startExtraWorker, type StartedProcess } from "../support/processes";

const bucket = testBucketClient();
const tag = Date.now().toString(36);
const DISCS = 10; // two sides each: 20 sides, 20 renders
const FIXITY_OBJECTS = 200;

let c: LabCookies;
let second: (StartedProcess & { identity: string }) | null = null;

beforeAll(async () => {
  c = await labCookies();
}, 60_000);

afterAll(async () => {
  await second?.stop();
  await testDb.destroy();
});

/** Runs `fn` over `items`, `width` at a time. */
async function inBatches<T, R>(
  items: T[],
  width: number,
  fn: (item: T, i: number) => Promise<R>,
): Promise<R[]> {
  const out: R[] = [];
  for (let i = 0; i < items.length; i += width)
    out.push(...(await Promise.all(items.slice(i, i + width).map((x, j) => fn(x, i + j)))));
  return out;
}

describe("two workers against one database", () => {
  it("do 20 renders and 200 fixity checks queued at once each exactly once, and both workers do some", async () => {
    const began = Date.now();
    // The lab's work: 20 sides, each with a curve and a short flat transfer accepted through the API.
    const discs = await inBatches(
      Array.from({ length: DISCS }, (_, i) => i),
      5,
      (i) => assignedDisc(c, `TWO-WORKERS-${tag}-${i}`, ["A", "B"]),
    );
    const sideIds = discs.flatMap((d) => d.sideIds);
    await chooseCurve(c, sideIds);
    await inBatches(sideIds, 5, async (sideId, i) => {
      const up = await uploadTransfer(c, sideId, makeWav({ seconds: 1, channels: 1, seed: i + 1 }), "t.wav");
      expect(up.done.status).toBe(201);
    });
    const current = await testDb
      .selectFrom("transfers")
      .selectAll()
      .where("side_id", "in", sideIds)
      .execute();
    expect(current).toHaveLength(sideIds.length);

    // Earlier transfers of the same sides, so the drill has 200 stored objects to check
    // without 200 uploads: each a distinct small file in the bucket, recorded as an upload
    // records it (key, SHA-256, size, header fields).
    const engineerId = current[0].uploaded_by;
    await inBatches(
      Array.from({ length: FIXITY_OBJECTS - current.length }, (_, i) => i),
      20,
      async (i) => {
        const like = current[i % current.length];
        const bytes = makeWav({ seconds: 0.05, channels: 1, seed: 1000 + i });
        const key = `transfers/${like.side_id}/earlier-${tag}-${i}/flat.wav`;
        await bucket.send(
          new PutObjectCommand({ Bucket: process.env.S3_BUCKET, Key: key, Body: Buffer.from(bytes) }),
        );
        await testDb
          .insertInto("transfers")
          .values({
            side_id: like.side_id,
            object_key: key,
            file_name: `earlier-${i}.wav`,
            sha256: sha256Of(bytes),
            bytes: bytes.length,
            container: like.container,
            encoding: like.encoding,
            bits_per_sample: like.bits_per_sample,
            channels: like.channels,
            sample_rate_hz: like.sample_rate_hz,
            frames: Math.round(0.05 * like.sample_rate_hz),
            duration_seconds: 0.05,
            bext: null,
            measured_speed_rpm: null,
            derived_from: null,
            uploaded_by: engineerId,
            upload_id: null,
          })
          .execute();
      },
    );
    const transferIds = (
      await testDb.selectFrom("transfers").select("id").where("side_id", "in", sideIds).execute()
    ).map((t) => t.id);
    expect(transferIds).toHaveLength(FIXITY_OBJECTS);

    const arranged = Date.now();
    // The second worker, beside the profile's own.
    const firstPid = Number((await fs.readFile(workerChildPidFile(profile("test")), "utf8")).trim());
    second = await startExtraWorker(`worker-second-${tag}`);
    expect(second.pid).not.toBe(firstPid);
    expect(second.identity).toContain(`:${second.pid}:`);

    const secondReady = Date.now();
    const firstLog = path.join(profile("test").dir, "logs", "worker.log");
    const firstLogFrom = (await fs.readFile(firstLog, "utf8")).length;
    // At once: the engineer asks for 20 renders, the curator for a fixity check of every disc.
    const [renders, checks] = await Promise.all([
      Promise.all(
        sideIds.map((sideId) =>
          api("/api/renders", {
            cookie: c.engineer,
            method: "POST",
            body: { sideId, channelMode: "both", bitDepth: 16, sampleRateHz: "transfer" },
          }),
        ),
      ),
      Promise.all(
        discs.map((d) =>
          api("/api/fixity", { cookie: c.curator, method: "POST", body: { discId: d.discId } }),
        ),
      ),
    ]);
    for (const r of renders) expect(r.status).toBe(202);
    for (const f of checks) expect(f.status).toBe(202);
    const renderIds: string[] = renders.map((r) => r.body.renderId);
    const askedAt = new Date(Math.min(...checks.map((f) => f.body.askedAt as number)));
    // Every transfer, and any access copy already done when its disc's check was asked for.
    const queued = checks.reduce((n, f) => n + (f.body.queued as number), 0);
    expect(queued).toBeGreaterThanOrEqual(FIXITY_OBJECTS);

    const resultsSince = () =>
      testDb
        .selectFrom("fixity_checks")
        .select(["object_kind", "object_id", "outcome", "worker_identity"])
        .where("side_id", "in", sideIds)
        .where("checked_at", ">=", askedAt)
        .execute();
    await until(
      "every render done and every check recorded",
      async () => {
        const statuses = await testDb
          .selectFrom("renders")
          .select(["status", "error"])
          .where("id", "in", renderIds)
          .execute();
        const failed = statuses.find((s) => s.status === "failed" || s.status === "cancelled");
        if (failed) throw new Error(`a render ${failed.status}: ${failed.error}`);
        const done = statuses.filter((s) => s.status === "done").length;
        return done === renderIds.length && (await resultsSince()).length >= queued ? true : undefined;
      },
      100_000,
    );
    const workDone = Date.now();
    // A late duplicate would show in the next seconds: nothing more arrives.
    await new Promise((r) => setTimeout(r, 3000));

    // Renders: each recorded once, by one of the two workers, with one object and one event.
    const rows = await testDb
      .selectFrom("renders")
      .select(["id", "side_id", "status", "object_key", "bytes", "worker_identity", "lease_owner"])
      .where("side_id", "in", sideIds)
      .execute();
    expect(rows).toHaveLength(renderIds.length);
    for (const r of rows) {
      expect(r.status).toBe("done");
      expect(r.lease_owner).toBeNull();
      expect(r.object_key).toBe(`access/${r.side_id}/${r.id}.wav`);
    }
    const rendered = await testDb
      .selectFrom("provenance_events")
      .select(sql<string>`payload->>'renderId'`.as("renderId"))
      .where("kind", "=", "side.rendered")
      .where("subject_id", "in", sideIds)
      .execute();
    expect(rendered.map((e) => e.renderId).sort()).toEqual([...renderIds].sort());
    for (const sideId of sideIds) {
      const listed = await bucket.send(
        new ListObjectsV2Command({ Bucket: process.env.S3_BUCKET, Prefix: `access/${sideId}/` }),
      );
      const mine = rows.find((r) => r.side_id === sideId)!;
      expect((listed.Contents ?? []).map((o) => [o.Key, Number(o.Size)])).toEqual([
        [mine.object_key, Number(mine.bytes)],
      ]);
    }
    const sides = await testDb
      .selectFrom("sides")
      .select(["id", "status", "current_render_id"])
      .where("id", "in", sideIds)
      .execute();
    for (const s of sides)
      expect(s).toEqual({
        id: s.id,
        status: "rendered",
        current_render_id: rows.find((r) => r.side_id === s.id)!.id,
      });

    // Fixity: one result and one event per object queued, each passing.
    const results = await resultsSince();
    expect(results).toHaveLength(queued);
    const perObject = new Map<string, number>();
    for (const r of results) perObject.set(r.object_id, (perObject.get(r.object_id) ?? 0) + 1);
    expect([...perObject.values()].every((n) => n === 1)).toBe(true);
    for (const id of transferIds) expect(perObject.get(id)).toBe(1);
    expect(results.filter((r) => r.outcome !== "pass")).toEqual([]);
    const checkedEvents = await testDb
      .selectFrom("provenance_events")
      .select(sql<string>`payload->'object'->>'id'`.as("objectId"))
      .where("kind", "=", "side.fixity_checked")
      .where("subject_id", "in", sideIds)
      .where("at", ">=", askedAt)
      .execute();
    expect(checkedEvents.map((e) => e.objectId).sort()).toEqual([...perObject.keys()].sort());

    // Both workers did some of each kind of work, and no one else did any.
    const first = (identity: string | null) => identity?.includes(`:${firstPid}:`);
    const bySecond = (identity: string | null) => identity === second!.identity;
    for (const who of [...rows.map((r) => r.worker_identity), ...results.map((r) => r.worker_identity)])
      expect(first(who) || bySecond(who)).toBe(true);
    const split = {
      renders: [
        rows.filter((r) => first(r.worker_identity)).length,
        rows.filter((r) => bySecond(r.worker_identity)).length,
      ],
      checks: [
        results.filter((r) => first(r.worker_identity)).length,
        results.filter((r) => bySecond(r.worker_identity)).length,
      ],
    };
    const secs = (ms: number) => `${(ms / 1000).toFixed(1)} s`;
    console.log(
      `[two workers] renders ${split.renders.join(" + ")}, fixity checks ${split.checks.join(" + ")}; ` +
        `arranging ${secs(arranged - began)}, second worker up ${secs(secondReady - arranged)}, the work ${secs(workDone - secondReady)}`,
    );
    expect(Math.min(...split.renders)).toBeGreaterThan(0);
    expect(Math.min(...split.checks)).toBeGreaterThan(0);

    // No job failed and waited for its retry (two workers recording at once once deadlocked here).
    const during = [(await fs.readFile(firstLog, "utf8")).slice(firstLogFrom), await second.log()].join("\n");
    expect(during.split("\n").filter((l) => /failed/.test(l) && !/, 0 failed/.test(l))).toEqual([]);

    // The second worker logged its share, and stops cleanly by its PID.
    const log = await second.log();
    expect(log).toMatch(/\[worker\] render \S+: done/);
    expect(log).toMatch(/\[worker\] fixity transfer \S+: pass/);
    await second.stop();
    second = null;
  }, 180_000);
});
