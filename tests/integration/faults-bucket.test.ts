// Fault drills of the lab's file store: the test profile's s3rver killed by its PID and
// started again on the same port and data folder, (1) in the middle of an upload and
// (2) under a render and a fixity check. Each shows what the person sees and that
// nothing is lost or doubled; a missing object, by contrast, is reported as missing.
import { createHash } from "node:crypto";
import { promises as fs } from "node:fs";
import path from "node:path";
import {
  DeleteObjectCommand,
  GetObjectCommand,
  ListObjectsV2Command,
  PutObjectCommand,
} from "@aws-sdk/client-s3";
import { sql } from "kysely";
import { afterAll, afterEach, beforeAll, describe, expect, it, onTestFinished } from "vitest";
import {
  type AcceptedTransfer,
  runUpload,
  storeOutageMessage,
  type UploadIo,
  type UploadState,
  idleUpload,
} from "@/lib/transfers/upload-client";
import { api } from "../support/app";
import { testBucketClient } from "../support/bucket";
import { ownerDb, testDb } from "../support/db";
import { makeWav } from "../support/make-wav";
import {
  assignedDisc,
  chooseCurve,
  type LabCookies,
  labCookies,
  transferDetails,
  until,
  uploadTransfer,
} from "../support/pipeline";
import { killS3rver, startS3rverAgain, testProfile } from "../support/processes";
import { nodeUploadIo, partNumberOf } from "../support/upload-io";

const bucket = process.env.S3_BUCKET ?? "rillbook";
const sha256Of = (b: Uint8Array) => createHash("sha256").update(b).digest("hex");

let c: LabCookies;
let s3Down = false;

beforeAll(async () => {
  c = await labCookies();
});

// A drill that failed half-way must not leave the next ones (or other files) without their bucket.
afterEach(async () => {
  if (s3Down) await bringStoreBack();
});

afterAll(async () => {
  await testDb.destroy();
  await ownerDb.destroy();
});

async function takeStoreDown(): Promise<void> {
  await killS3rver();
  s3Down = true;
}

async function bringStoreBack(): Promise<void> {
  await startS3rverAgain();
  s3Down = false;
}

/** Every object under a prefix of the bucket, with its size. */
async function listed(prefix: string): Promise<{ key: string; size: number }[]> {
  const res = await testBucketClient().send(new ListObjectsV2Command({ Bucket: bucket, Prefix: prefix }));
  return (res.Contents ?? []).map((o) => ({ key: o.Key!, size: Number(o.Size) }));
}

async function storedSha256(key: string): Promise<string> {
  const res = await testBucketClient().send(new GetObjectCommand({ Bucket: bucket, Key: key }));
  return sha256Of(await res.Body!.transformToByteArray());
}

/** Whether s3rver still keeps the unassembled parts of a multipart upload in its data folder. */
async function partsLeftInStore(storageUploadId: string): Promise<boolean> {
  const walk = async (dir: string): Promise<boolean> => {
    for (const e of await fs.readdir(dir, { withFileTypes: true }).catch(() => [])) {
      if (!e.isDirectory()) continue;
      if (e.name === storageUploadId) return true;
      if (await walk(path.join(dir, e.name))) return true;
    }
    return false;
  };
  return walk(path.join(testProfile.dir, "s3"));
}

type PutOutcome = { part: number; outcome: "stored" | "unreachable" | "refused" | "cancelled" };

/**
 * The Node transport of the upload engine, watched: every PUT's part number and outcome
 * is logged, and `beforePut` may hold a PUT back (to take the store down at a chosen
 * moment). The engine's logic is the bench's own.
 */
function watchedIo(memory: Map<string, string>, beforePut: (part: number) => Promise<void>) {
  const base = nodeUploadIo(c.engineer, memory);
  const puts: PutOutcome[] = [];
  const io: UploadIo = {
    ...base,
    async putPart(url, body, onProgress, signal) {
      const part = partNumberOf(url);
      await beforePut(part);
      try {
        const etag = await base.putPart(url, body, onProgress, signal);
        puts.push({ part, outcome: "stored" });
        return etag;
      } catch (err) {
        puts.push({ part, outcome: (err as { kind?: PutOutcome["outcome"] }).kind ?? "refused" });
        throw err;
      }
    },
  };
  const stored = (part: number) => puts.filter((p) => p.part === part && p.outcome === "stored").length;
  return { io, puts, stored };
}

/** Runs the bench's upload engine, keeping every state it reports. */
function startEngine(
  sideId: string,
  bytes: Uint8Array,
  fileName: string,
  io: UploadIo,
  giveUpAfterMs?: number,
) {
  let state: UploadState = idleUpload;
  const seen: { state: UploadState; at: number }[] = [];
  const controller = new AbortController();
  const run: Promise<AcceptedTransfer | null> = runUpload({
    sideId,
    file: {
      name: fileName,
      size: bytes.length,
      slice: (from, to) => Promise.resolve(bytes.slice(from, to)),
    },
    details: transferDetails,
    io,
    onState: (update) => {
      state = update(state);
      seen.push({ state, at: Date.now() });
    },
    signal: controller.signal,
    // Shorter pauses than the bench's (1 s doubling to 30 s), so the drill does not wait long.
    options: { firstPauseMs: 300, maxPauseMs: 1500, ...(giveUpAfterMs ? { giveUpAfterMs } : {}) },
  });
  return { run, state: () => state, seen, controller };
}

describe("the file store unreachable in the middle of an upload", () => {
  it(
    "tells the engineer, waits the outage out with growing pauses, then sends only the parts not yet stored; " +
      "the transfer is accepted once with the right SHA-256",
    async () => {
      const { sideIds } = await assignedDisc(c, `FAULT-S3-UP-${Date.now().toString(36)}`, ["A"]);
      const sideId = sideIds[0];
      // About 38 MB: five 8 MiB parts, three in flight at a time.
      const bytes = makeWav({ seconds: 290, channels: 1, seed: 15 });
      expect(Math.ceil(bytes.length / (8 * 1024 * 1024))).toBe(5);
      const expectedSha = sha256Of(bytes);

      // Parts 1 and 2 reach the store; then it dies, before part 3 (and 4, 5) can go.
      let downOnce: Promise<void> | null = null;
      const memory = new Map<string, string>();
      const w = watchedIo(memory, async (part) => {
        if (part < 3) return;
        downOnce ??= (async () => {
          await until("parts 1 and 2 stored", () => (w.stored(1) && w.stored(2) ? true : undefined));
          await takeStoreDown();
        })();
        await downOnce;
      });
      const e = startEngine(sideId, bytes, "outage-drill.wav", w.io);

      // What the engineer sees: the outage in plain words, while the upload keeps trying.
      // (A passing failure to reach the app itself, if one happens, is reported in its own words first.)
      const outage = await until(
        "the store's outage to be reported",
        () => (e.state().outage?.message === storeOutageMessage ? e.state().outage! : undefined),
        60_000,
      );
      expect(outage.message).toBe("The lab's file store cannot be reached; retrying…");
      expect(e.state().phase).toBe("uploading");
      await until("several tries against the dead store", () =>
        (e.state().outage?.tries ?? 0) >= 12 ? true : undefined,
      );
      // The pauses grow: 300 ms doubling to 1.5 s here (±20 %), so the first is short and later ones long.
      const pauses = e.seen
        .filter((s) => s.state.outage?.message === storeOutageMessage)
        .map((s) => s.state.outage!.nextTryAt - s.at);
      expect(Math.min(...pauses)).toBeLessThan(500);
      expect(Math.max(...pauses)).toBeGreaterThanOrEqual(1000);
      const refusedMeanwhile = w.puts.filter((p) => p.outcome === "unreachable").length;
      expect(refusedMeanwhile).toBeGreaterThanOrEqual(4);
      expect(w.puts.filter((p) => p.outcome === "refused")).toEqual([]);
      // The server's side of it: the upload is still open, nothing accepted.
      const uploadRow = await testDb
        .selectFrom("uploads")
        .select(["id", "state", "storage_upload_id", "object_key"])
        .where("side_id", "=", sideId)
        .executeTakeFirstOrThrow();
      expect(uploadRow.state).toBe("open");
      expect(
        await testDb.selectFrom("transfers").select("id").where("side_id", "=", sideId).execute(),
      ).toEqual([]);

      // The store comes back on the same port and data folder: the upload carries on by itself.
      await bringStoreBack();
      const result = await e.run;
      expect(e.state().error).toBeNull();
      expect(e.state().phase).toBe("done");
      expect(e.state().outage).toBeNull();
      expect(result?.sha256).toBe(expectedSha);
      expect(result?.bytes).toBe(bytes.length);

      // Resumed, not started over: parts 1 and 2 went once, before the outage; every part was stored exactly once.
      expect(w.puts.filter((p) => p.part <= 2)).toEqual([
        expect.objectContaining({ outcome: "stored" }),
        expect.objectContaining({ outcome: "stored" }),
      ]);
      for (let n = 1; n <= 5; n++) expect(w.stored(n)).toBe(1);
      // One upload, one transfer with the right checksum, one event; the side is transferred.
      const uploads = await testDb
        .selectFrom("uploads")
        .select(["state"])
        .where("side_id", "=", sideId)
        .execute();
      expect(uploads).toEqual([{ state: "completed" }]);
      const transfers = await testDb
        .selectFrom("transfers")
        .select(["id", "sha256", "bytes", "object_key"])
        .where("side_id", "=", sideId)
        .execute();
      expect(transfers).toHaveLength(1);
      expect(transfers[0].sha256).toBe(expectedSha);
      expect(Number(transfers[0].bytes)).toBe(bytes.length);
      const events = await testDb
        .selectFrom("provenance_events")
        .select("id")
        .where("kind", "=", "side.transfer_accepted")
        .where("subject_id", "=", sideId)
        .execute();
      expect(events).toHaveLength(1);
      const side = await testDb
        .selectFrom("sides")
        .select("status")
        .where("id", "=", sideId)
        .executeTakeFirstOrThrow();
      expect(side.status).toBe("transferred");
      // In the bucket: the one assembled file, byte for byte, and no parts left over.
      expect(await listed(`transfers/${sideId}/`)).toEqual([
        { key: uploadRow.object_key, size: bytes.length },
      ]);
      expect(await storedSha256(uploadRow.object_key)).toBe(expectedSha);
      expect(await partsLeftInStore(uploadRow.storage_upload_id)).toBe(false);
      // Nothing remembered for a resume any more.
      expect(memory.size).toBe(0);
    },
    300_000,
  );

  it("when the outage outlasts the wait, says so and keeps the parts; trying again after the store is back sends only the rest", async () => {
    const { sideIds } = await assignedDisc(c, `FAULT-S3-AGAIN-${Date.now().toString(36)}`, ["A"]);
    const sideId = sideIds[0];
    // Two parts: 8 MiB and the rest.
    const bytes = makeWav({ seconds: 100, channels: 1, seed: 16 });
    expect(Math.ceil(bytes.length / (8 * 1024 * 1024))).toBe(2);
    const memory = new Map<string, string>();

    let downOnce: Promise<void> | null = null;
    const first = watchedIo(memory, async (part) => {
      if (part < 2) return;
      downOnce ??= (async () => {
        await until("part 1 stored", () => (first.stored(1) ? true : undefined));
        await takeStoreDown();
      })();
      await downOnce;
    });
    const e1 = startEngine(sideId, bytes, "gave-up.wav", first.io, 3000);
    expect(await e1.run).toBeNull();
    expect(e1.state().phase).toBe("failed");
    expect(e1.state().error).toMatch(
      /^The lab's file store cannot be reached: tried for \d+ s\. The parts already stored are kept/,
    );
    expect(e1.state().resumable).toBe(true);
    expect(e1.seen.some((s) => s.state.outage?.message === storeOutageMessage)).toBe(true);
    expect(first.stored(1)).toBe(1);
    expect(first.stored(2)).toBe(0);
    // The upload stays open on the server, and the browser remembers the part it stored.
    const row = await testDb
      .selectFrom("uploads")
      .select(["state", "object_key", "storage_upload_id"])
      .where("side_id", "=", sideId)
      .executeTakeFirstOrThrow();
    expect(row.state).toBe("open");
    expect([...memory.values()].map((v) => Object.keys(JSON.parse(v).parts))).toEqual([["1"]]);

    await bringStoreBack();
    // "Try again": the same engine, the same remembered upload. s3rver cannot list parts:
    // the server says so (parts: null) and the engine goes by the parts it remembers.
    const second = watchedIo(memory, () => Promise.resolve());
    const e2 = startEngine(sideId, bytes, "gave-up.wav", second.io);
    const result = await e2.run;
    expect(e2.state().error).toBeNull();
    expect(e2.state().resumedParts).toBe(1);
    expect(second.puts).toEqual([{ part: 2, outcome: "stored" }]);
    expect(result?.sha256).toBe(sha256Of(bytes));
    const uploads = await testDb
      .selectFrom("uploads")
      .select("state")
      .where("side_id", "=", sideId)
      .execute();
    expect(uploads).toEqual([{ state: "completed" }]);
    expect(await listed(`transfers/${sideId}/`)).toEqual([{ key: row.object_key, size: bytes.length }]);
    expect(await storedSha256(row.object_key)).toBe(sha256Of(bytes));
    expect(await partsLeftInStore(row.storage_upload_id)).toBe(false);
  }, 300_000);
});

/** The latest pg-boss job of a queue for one singleton key (read as the owner: pg-boss's tables are not the app's to read). */
async function latestJob(queue: string, where: { singletonKey?: string; renderId?: string }) {
  const rows = await sql<{ state: string; retry_count: number; output: unknown }>`
    select state, retry_count, output from pgboss.job
    where name = ${queue}
      and (${where.singletonKey ?? null}::text is null or singleton_key = ${where.singletonKey ?? null})
      and (${where.renderId ?? null}::text is null or data->>'renderId' = ${where.renderId ?? null})
    order by created_on desc limit 1`.execute(ownerDb);
  return rows.rows[0];
}

async function fixityRows(objectId: string) {
  return testDb
    .selectFrom("fixity_checks")
    .select(["outcome", "detail"])
    .where("object_id", "=", objectId)
    .execute();
}

async function fixityMail(shelfMark: string) {
  return testDb
    .selectFrom("outbox")
    .select(["subject", "to_address"])
    .where("subject", "like", `Fixity %${shelfMark}%`)
    .execute();
}

describe("the file store unreachable under a render and a fixity check", () => {
  it("fails each job with a plain 'cannot be reached', records no fixity result and mails no one, and both succeed once the store is back", async () => {
    const shelfMark = `FAULT-S3-JOBS-${Date.now().toString(36)}`;
    const { discId, sideIds } = await assignedDisc(c, shelfMark, ["A", "B"]);
    await chooseCurve(c, [sideIds[0]]);
    const flat = makeWav({ seconds: 4, seed: 21 });
    const transfers: string[] = [];
    for (const sideId of sideIds) {
      const up = await uploadTransfer(c, sideId, flat, `${shelfMark}.wav`);
      expect(up.done.status).toBe(201);
      transfers.push(up.done.body.transferId);
    }

    await takeStoreDown();
    // A render of side A and a fixity check of the disc (both flat transfers), while the store is away.
    const queued = await api("/api/renders", {
      cookie: c.engineer,
      method: "POST",
      body: { sideId: sideIds[0], channelMode: "both", bitDepth: 24 },
    });
    expect(queued.status).toBe(202);
    const renderId: string = queued.body.renderId;
    const asked = await api("/api/fixity", { cookie: c.curator, method: "POST", body: { discId } });
    expect(asked.status).toBe(202);
    expect(asked.body.queued).toBe(2);

    // Each job fails once with the plain reason, and waits in the queue for its retry.
    for (const id of transfers) {
      const job = await until(
        `the fixity check of transfer ${id} to fail once`,
        async () => {
          const j = await latestJob("fixity-check", { singletonKey: `transfer:${id}` });
          return j?.state === "retry" ? j : undefined;
        },
        60_000,
      );
      const output = job.output as { message?: string; stack?: string };
      expect(output.message).toMatch(
        /^The lab's file store cannot be reached \(.+\) while trying to read transfers\//,
      );
      expect(output.stack).toBeUndefined();
    }
    const renderJob = await until(
      "the render to fail once",
      async () => {
        const j = await latestJob("render", { renderId });
        return j?.state === "retry" ? j : undefined;
      },
      60_000,
    );
    expect((renderJob.output as { message?: string }).message).toMatch(
      /^The lab's file store cannot be reached/,
    );
    // The engineer sees the render waiting for its next try, with the reason in plain words.
    const list = await api(`/api/sides/${sideIds[0]}/renders`, { cookie: c.engineer });
    const shown = list.body.renders.find((r: { id: string }) => r.id === renderId);
    expect(shown.status).toBe("queued");
    expect(shown.error).toMatch(
      /^The lab's file store cannot be reached .* It will be tried again shortly\.$/,
    );
    expect(shown.error).not.toMatch(/ECONNREFUSED|at .*\.js/);

    // No false alarm: no fixity result, no event, no mail to the curators, nothing on the audit page.
    for (const id of transfers) expect(await fixityRows(id)).toEqual([]);
    const checkedEvents = await testDb
      .selectFrom("provenance_events")
      .select("id")
      .where("kind", "=", "side.fixity_checked")
      .where("disc_id", "=", discId)
      .execute();
    expect(checkedEvents).toEqual([]);
    expect(await fixityMail(shelfMark)).toEqual([]);
    const alerts = await api("/api/fixity", { cookie: c.curator });
    expect(alerts.status).toBe(200);
    expect(alerts.body.alerts.filter((a: { shelfMark: string }) => a.shelfMark === shelfMark)).toEqual([]);

    // The store comes back; the queue's retry (a minute later) succeeds.
    await bringStoreBack();
    for (const id of transfers) {
      const rows = await until(
        `the fixity check of transfer ${id} after the store came back`,
        async () => {
          const r = await fixityRows(id);
          return r.length ? r : undefined;
        },
        150_000,
      );
      expect(rows).toEqual([{ outcome: "pass", detail: null }]);
    }
    const done = await until(
      "the render after the store came back",
      async () => {
        const r = await testDb
          .selectFrom("renders")
          .selectAll()
          .where("id", "=", renderId)
          .executeTakeFirstOrThrow();
        if (r.status === "failed" || r.status === "cancelled")
          throw new Error(`render ${r.status}: ${r.error}`);
        return r.status === "done" ? r : undefined;
      },
      150_000,
    );
    // Recorded once, one access copy in the bucket and it is the one recorded; the side is rendered.
    expect(done.error).toBeNull();
    expect(
      await testDb.selectFrom("renders").select("id").where("side_id", "=", sideIds[0]).execute(),
    ).toEqual([{ id: renderId }]);
    const rendered = await testDb
      .selectFrom("provenance_events")
      .select("id")
      .where("kind", "=", "side.rendered")
      .where("subject_id", "=", sideIds[0])
      .execute();
    expect(rendered).toHaveLength(1);
    expect(await listed(`access/${sideIds[0]}/`)).toEqual([
      { key: `access/${sideIds[0]}/${renderId}.wav`, size: Number(done.bytes) },
    ]);
    expect(await storedSha256(done.object_key!)).toBe(done.sha256);
    const side = await testDb
      .selectFrom("sides")
      .select(["status", "current_render_id"])
      .where("id", "=", sideIds[0])
      .executeTakeFirstOrThrow();
    expect(side).toEqual({ status: "rendered", current_render_id: renderId });
    // Still no alarm was ever raised for this disc.
    expect(await fixityMail(shelfMark)).toEqual([]);
  }, 420_000);

  it("reports an object deleted from a reachable store as missing, and tells the curators", async () => {
    const shelfMark = `FAULT-S3-GONE-${Date.now().toString(36)}`;
    const { discId, sideIds } = await assignedDisc(c, shelfMark, ["A"]);
    const wav = makeWav({ seconds: 2, seed: 22 });
    const up = await uploadTransfer(c, sideIds[0], wav, `${shelfMark}.wav`);
    expect(up.done.status).toBe(201);
    const transferId: string = up.done.body.transferId;
    await testBucketClient().send(new DeleteObjectCommand({ Bucket: bucket, Key: up.key }));
    // The lab's bucket is shared by every test: the object goes back once the drill is done,
    // so a later backup of the whole lab finds every object it records.
    onTestFinished(async () => {
      await testBucketClient().send(new PutObjectCommand({ Bucket: bucket, Key: up.key, Body: wav }));
    });

    const asked = await api("/api/fixity", { cookie: c.curator, method: "POST", body: { discId } });
    expect(asked.status).toBe(202);
    const rows = await until(
      "the fixity check of the deleted transfer",
      async () => {
        const r = await fixityRows(transferId);
        return r.length ? r : undefined;
      },
      60_000,
    );
    expect(rows).toEqual([{ outcome: "missing", detail: "the object is not in the bucket" }]);
    const mail = await until("the curators' mail", async () => {
      const m = await fixityMail(shelfMark);
      return m.length ? m : undefined;
    });
    expect(mail[0].subject).toBe(`Fixity missing: ${shelfMark} side A (flat transfer)`);
    const alerts = await api("/api/fixity", { cookie: c.curator });
    expect(alerts.body.alerts.filter((a: { shelfMark: string }) => a.shelfMark === shelfMark)).toEqual([
      expect.objectContaining({ outcome: "missing", objectId: transferId }),
    ]);
  }, 120_000);
});
