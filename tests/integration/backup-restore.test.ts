// The restore drill: the lab works (a curve choice, an upload, a render, an approval, a
// checkpoint of the chain), a backup is taken with its objects while the app and worker
// run, and it is restored into a fresh database and a fresh bucket on the same services.
// The restore verifies itself; the test then checks the restored record and objects
// against the lab's own. Both scripts run as child processes, as an operator runs them.
import { spawn } from "node:child_process";
import { createHash } from "node:crypto";
import { promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import type { Readable } from "node:stream";
import { CreateBucketCommand, GetObjectCommand, PutObjectCommand } from "@aws-sdk/client-s3";
import { type Kysely, sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createDb } from "@/db/client";
import type { Database } from "@/db/types";
import { takeCheckpoint } from "@/lib/provenance/checkpoints";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { profile } from "@/scripts/lib/stack";
import { api, appUrl, signInCookie } from "../support/app";
import { ownerDb, testDb } from "../support/db";
import { addLabelImage, labelPicture } from "../support/label-images";
import { approvedDisc, type LabCookies, labCookies } from "../support/pipeline";
import { testBucketClient } from "../support/bucket";
import { freePort, startExtraApp } from "../support/processes";

const root = process.cwd();
const tag = Date.now().toString(36);
const bucket = testBucketClient();

function withDatabase(url: string, name: string): string {
  const u = new URL(url);
  u.pathname = `/${name}`;
  return u.toString();
}

function runScript(
  script: string,
  args: string[],
  env: Record<string, string> = {},
): Promise<{ code: number; output: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ["--import", "tsx", path.join("scripts", script), ...args], {
      cwd: root,
      env: { ...process.env, ...env },
      stdio: ["ignore", "pipe", "pipe"],
    });
    let output = "";
    child.stdout.on("data", (d) => (output += d));
    child.stderr.on("data", (d) => (output += d));
    child.on("error", reject);
    child.on("close", (code) => resolve({ code: code ?? 1, output }));
  });
}

async function storedHash(bucketName: string, key: string): Promise<string> {
  const res = await bucket.send(new GetObjectCommand({ Bucket: bucketName, Key: key }));
  const hash = createHash("sha256");
  for await (const chunk of res.Body as Readable) hash.update(chunk as Buffer);
  return hash.digest("hex");
}

/** A fresh, empty database owned by the owner role, and a fresh bucket: the "empty stack". */
async function emptyStack(
  name: string,
): Promise<{ env: Record<string, string>; db: Kysely<Database>; bucketName: string }> {
  await sql.raw(`DROP DATABASE IF EXISTS ${name}`).execute(ownerDb);
  await sql.raw(`CREATE DATABASE ${name}`).execute(ownerDb);
  const bucketName = `${name.replace(/_/g, "-")}-${tag}`;
  await bucket.send(new CreateBucketCommand({ Bucket: bucketName }));
  const ownerUrl = withDatabase(process.env.DATABASE_OWNER_URL!, name);
  return {
    env: {
      DATABASE_OWNER_URL: ownerUrl,
      DATABASE_URL: withDatabase(process.env.DATABASE_URL!, name),
      S3_BUCKET: bucketName,
    },
    db: createDb(ownerUrl, 2),
    bucketName,
  };
}

let c: LabCookies;
let dir: string;
let sideId: string;
let discId: string;
const opened: Kysely<Database>[] = [];
/** The first test's restored stack, served by an app of its own in the next. */
let restored: { env: Record<string, string>; bucketName: string; headSeq: number } | null = null;

beforeAll(async () => {
  c = await labCookies();
  dir = await fs.mkdtemp(path.join(os.tmpdir(), "rillbook-backup-"));
}, 60_000);

afterAll(async () => {
  for (const db of opened) await db.destroy();
  for (const name of ["rillbook_restore", "rillbook_restore_bad"])
    await sql
      .raw(`DROP DATABASE IF EXISTS ${name}`)
      .execute(ownerDb)
      .catch(() => undefined);
  await fs.rm(dir, { recursive: true, force: true });
});

describe("backup and restore", () => {
  it("a backup taken with its objects restores into an empty database and bucket, verifies, and holds the same catalogue, chain and files", async () => {
    ({ discId, sideId } = await approvedDisc(c, `BR-${tag}`));
    // A photograph of the side's label: its original and its thumbnail are the lab's objects too.
    const picture = await labelPicture("png");
    const added = await addLabelImage(c.archivist, discId, picture, {
      kind: "label",
      sideId,
      contentType: "image/png",
      fileName: "label-a.png",
    });
    expect(added.status).toBe(201);
    const cp = await takeCheckpoint(testDb, { reason: "requested" });
    expect(cp.status).toBe("written");

    // The lab keeps working while the backup runs: an archivist records accessions back to back.
    let writing = true;
    let written = 0;
    const writer = (async () => {
      while (writing) {
        const r = await api("/api/accessions", {
          cookie: c.archivist,
          method: "POST",
          body: { identifier: `ACC-BR-${tag}-${written}`, source: "Backup drill", receivedOn: "2026-12-02" },
        });
        expect(r.status).toBe(201);
        written++;
      }
    })();
    const backup = await runScript("backup.ts", [dir, "--with-objects"]);
    writing = false;
    await writer;
    expect(backup.output).toContain("backup written");
    expect(backup.code).toBe(0);
    expect(written).toBeGreaterThan(0);
    const description = JSON.parse(await fs.readFile(path.join(dir, "backup.json"), "utf8"));
    const manifest = JSON.parse(await fs.readFile(path.join(dir, "manifest.json"), "utf8"));
    const transfer = await testDb
      .selectFrom("transfers")
      .select(["id", "object_key", "sha256"])
      .where("side_id", "=", sideId)
      .executeTakeFirstOrThrow();
    const render = await testDb
      .selectFrom("renders")
      .select(["id", "object_key", "sha256"])
      .where("side_id", "=", sideId)
      .where("status", "=", "done")
      .executeTakeFirstOrThrow();
    const keys = manifest.objects.map((o: { key: string }) => o.key);
    expect(keys).toContain(transfer.object_key);
    expect(keys).toContain(render.object_key!);
    expect(keys).toContain(cp.status === "written" ? cp.key : "");
    const label = await testDb
      .selectFrom("label_images")
      .select(["object_key", "thumbnail_key", "sha256"])
      .where("id", "=", added.labelImageId!)
      .executeTakeFirstOrThrow();
    expect(manifest.objects.find((o: { key: string }) => o.key === label.object_key)).toMatchObject({
      kind: "label_image",
      sha256: label.sha256,
    });
    expect(keys).toContain(label.thumbnail_key);
    expect(description.counts.labelImages).toBeGreaterThanOrEqual(1);
    expect(manifest.objects.find((o: { key: string }) => o.key === transfer.object_key).sha256).toBe(
      transfer.sha256,
    );
    expect(description.counts.objects).toBe(manifest.objects.length);
    expect(description.chainHead.seq).toBeGreaterThan(0);

    const target = await emptyStack("rillbook_restore");
    opened.push(target.db);
    const restore = await runScript("restore.ts", [dir], target.env);
    expect(restore.output).toContain("restore verified: no differences");
    expect(restore.code).toBe(0);
    restored = { env: target.env, bucketName: target.bucketName, headSeq: description.chainHead.seq };

    // Dump and chain come from one moment: every accession recorded during the backup that the
    // restored database holds has its event in the restored log, and none has one without its row.
    const during = await target.db
      .selectFrom("accessions")
      .select("id")
      .where("identifier", "like", `ACC-BR-${tag}-%`)
      .execute();
    expect(during.length).toBeLessThanOrEqual(written);
    const received = await target.db
      .selectFrom("provenance_events")
      .select("subject_id")
      .where("kind", "=", "accession.received")
      .where(
        "subject_id",
        "in",
        during.length ? during.map((a) => a.id) : ["00000000-0000-0000-0000-000000000000"],
      )
      .execute();
    expect(received.length).toBe(during.length);
    const eventsDuring = await target.db
      .selectFrom("provenance_events")
      .select(sql<number>`count(*)::int`.as("n"))
      .where("kind", "=", "accession.received")
      .where(sql<boolean>`payload->'after'->>'identifier' LIKE ${`ACC-BR-${tag}-%`}`)
      .executeTakeFirstOrThrow();
    expect(eventsDuring.n).toBe(during.length);

    // The same catalogue, as of the backup (nothing else changes it while this file runs).
    const discsLive = await testDb.selectFrom("discs").selectAll().orderBy("id").execute();
    const discsRestored = await target.db.selectFrom("discs").selectAll().orderBy("id").execute();
    expect(discsRestored).toEqual(discsLive);
    expect(discsRestored.some((d) => d.id === discId)).toBe(true);
    expect(await target.db.selectFrom("sides").selectAll().orderBy("id").execute()).toEqual(
      await testDb.selectFrom("sides").selectAll().orderBy("id").execute(),
    );
    expect(await target.db.selectFrom("transfers").selectAll().orderBy("id").execute()).toEqual(
      await testDb.selectFrom("transfers").selectAll().orderBy("id").execute(),
    );

    // The same provenance chain up to the backup's head.
    const head = await target.db
      .selectFrom("provenance_events")
      .select(["seq", "hash"])
      .orderBy("seq", "desc")
      .limit(1)
      .executeTakeFirstOrThrow();
    expect({ seq: Number(head.seq), hash: head.hash }).toEqual(description.chainHead);
    const liveAtHead = await testDb
      .selectFrom("provenance_events")
      .select("hash")
      .where("seq", "=", head.seq)
      .executeTakeFirstOrThrow();
    expect(liveAtHead.hash).toBe(head.hash);

    // The app's role can work in the restored database, and no more than before.
    const appDb = createDb(target.env.DATABASE_URL, 1);
    opened.push(appDb);
    expect((await appDb.selectFrom("discs").select("id").where("id", "=", discId).execute()).length).toBe(1);
    await expect(sql`DELETE FROM provenance_events`.execute(appDb)).rejects.toThrow(/permission denied/);

    // The files, with the same hashes as the lab's record.
    expect(await storedHash(target.bucketName, transfer.object_key)).toBe(transfer.sha256);
    expect(await storedHash(target.bucketName, render.object_key!)).toBe(render.sha256);
    expect(await storedHash(target.bucketName, label.object_key)).toBe(label.sha256);
    const original = await bucket.send(
      new GetObjectCommand({ Bucket: target.bucketName, Key: label.object_key }),
    );
    expect(original.ContentType).toBe("image/png");
    const thumbnail = await bucket.send(
      new GetObjectCommand({ Bucket: target.bucketName, Key: label.thumbnail_key! }),
    );
    expect(thumbnail.ContentType).toBe("image/jpeg");

    // A second restore into the now-full database is refused, and says how to make an empty one.
    const again = await runScript("restore.ts", [dir], target.env);
    expect(again.code).toBe(2);
    expect(again.output).toMatch(/already holds \d+ tables.*CREATE DATABASE/s);
  }, 300_000);

  it("the restored lab, served by an app of its own, shows the same catalogue, the same timeline and files with the same hashes", async () => {
    expect(restored).not.toBeNull();
    const { env: targetEnv, bucketName, headSeq } = restored!;
    const test = profile("test");
    // `next start` on the test build, on a free port of this checkout's range, with the restored database and bucket.
    const app = await startExtraApp("app-restored", await freePort(test.appPort + 5, 5), targetEnv);
    try {
      const curator = demoAccounts.find((a) => a.role === "curator")!;
      const live = c.curator;
      const there = await signInCookie(curator.email, curator.password, app.url);
      const both = async (pathname: string) => {
        const [a, b] = await Promise.all([
          api(pathname, { cookie: live }),
          api(pathname, { cookie: there, base: app.url }),
        ]);
        expect(a.status).toBe(200);
        expect(b.status).toBe(200);
        return [a.body, b.body];
      };

      // The catalogue: the list (first page, default order), a search, and the disc's record.
      for (const pathname of [
        "/api/discs",
        `/api/discs?q=${encodeURIComponent(`BR-${tag}`)}`,
        `/api/discs/${discId}`,
      ]) {
        const [a, b] = await both(pathname);
        expect(b).toEqual(a);
      }

      // The disc's timeline, as of the backup (the live lab may have recorded more since).
      const [liveTimeline, restoredTimeline] = await both(`/api/discs/${discId}/events`);
      expect(restoredTimeline.events.length).toBeGreaterThan(5);
      expect(restoredTimeline.events).toEqual(
        liveTimeline.events.filter((e: { seq: number }) => Number(e.seq) <= headSeq),
      );

      // The files: the flat transfer and the access copy, downloaded through each app, from each one's bucket.
      const transfer = await testDb
        .selectFrom("transfers")
        .select(["id", "sha256"])
        .where("side_id", "=", sideId)
        .executeTakeFirstOrThrow();
      const render = await testDb
        .selectFrom("renders")
        .select(["id", "sha256"])
        .where("side_id", "=", sideId)
        .where("status", "=", "done")
        .executeTakeFirstOrThrow();
      const download = async (base: string, cookie: string, pathname: string) => {
        const res = await fetch(`${base}${pathname}`, { headers: { cookie }, redirect: "manual" });
        expect(res.status).toBe(302);
        const location = res.headers.get("location")!;
        const file = await fetch(location);
        expect(file.status).toBe(200);
        return {
          bucket: new URL(location).pathname.split("/")[1],
          sha256: createHash("sha256")
            .update(Buffer.from(await file.arrayBuffer()))
            .digest("hex"),
        };
      };
      for (const [pathname, sha256] of [
        [`/api/transfers/${transfer.id}/download`, transfer.sha256],
        [`/api/renders/${render.id}/download`, render.sha256!],
      ]) {
        const fromLive = await download(appUrl, live, pathname);
        const fromRestored = await download(app.url, there, pathname);
        expect(fromRestored.bucket).toBe(bucketName);
        expect(fromLive.bucket).not.toBe(bucketName);
        expect(fromRestored.sha256).toBe(sha256);
        expect(fromLive.sha256).toBe(sha256);
      }

      // The restored app verifies its own chain too.
      const verified = await api("/api/provenance/verify", { cookie: there, base: app.url });
      expect(verified.status).toBe(200);
      expect(verified.body.ok).toBe(true);
    } finally {
      await app.stop();
    }
  }, 180_000);

  it("a restore whose bucket holds a damaged object exits non-zero and names that object", async () => {
    const manifest = JSON.parse(await fs.readFile(path.join(dir, "manifest.json"), "utf8"));
    const damaged = manifest.objects.find((o: { kind: string }) => o.kind === "render");
    expect(damaged).toBeTruthy();
    const target = await emptyStack("rillbook_restore_bad");
    opened.push(target.db);
    // The damaged copy is already in the bucket: the restore never replaces an object, so verification must find it.
    const original = await fs.readFile(path.join(dir, "objects", damaged.key));
    const bad = Buffer.from(original);
    bad[bad.length - 1] ^= 0xff;
    await bucket.send(new PutObjectCommand({ Bucket: target.bucketName, Key: damaged.key, Body: bad }));

    const restore = await runScript("restore.ts", [dir], target.env);
    expect(restore.code).toBe(1);
    expect(restore.output).toContain("restore NOT verified");
    expect(restore.output).toMatch(
      new RegExp(`render object ${damaged.key.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")} differs`),
    );
    // Every other object verified.
    expect(restore.output).toContain(
      `objects: ${manifest.objects.length - 1} of ${manifest.objects.length} present`,
    );
  }, 120_000);
});
