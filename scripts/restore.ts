// `npm run restore -- DIR`: restores a backup written by `npm run backup` into an empty
// stack (the database DATABASE_OWNER_URL names, the bucket S3_BUCKET names), then
// verifies it: the provenance chain end to end and against its checkpoints, and every
// object of the manifest present in the bucket with its size and SHA-256. It prints a
// report and exits 0 only when nothing differs (1: a difference; 2: refused or failed).
import "./lib/demo-env";
import { spawn } from "node:child_process";
import { createHash } from "node:crypto";
import { createReadStream, existsSync, promises as fs } from "node:fs";
import path from "node:path";
import type { Readable } from "node:stream";
import { GetObjectCommand, HeadBucketCommand, HeadObjectCommand, PutObjectCommand } from "@aws-sdk/client-s3";
import { sql } from "kysely";
import { z } from "zod";
import { createDb } from "../db/client";
import { grantAppRole, roleOf } from "../db/roles";
import { env } from "../lib/env";
import { verifyChain } from "../lib/provenance";
import { s3 } from "../lib/storage/s3";
import {
  type BackupDescription,
  databaseNameOf,
  descriptionFile,
  descriptionSchema,
  dumpFile,
  hashFile,
  type Manifest,
  manifestFile,
  manifestSchema,
  objectContentType,
  objectPath,
  objectsDir,
  pgConnection,
  pgProgram,
} from "./lib/backup-format";

class Refused extends Error {}

const argsSchema = z.object({ dir: z.string().min(1, "name the backup folder: npm run restore -- DIR") });

function runProgram(file: string, args: string[], extraEnv: Record<string, string>): Promise<string> {
  return new Promise((resolve, reject) => {
    const child = spawn(file, args, {
      env: { ...process.env, ...extraEnv },
      stdio: ["ignore", "pipe", "pipe"],
    });
    let out = "";
    child.stdout.on("data", (d) => (out += d));
    child.stderr.on("data", (d) => (out += d));
    child.on("error", reject);
    child.on("close", (code) =>
      code === 0
        ? resolve(out)
        : reject(new Error(`${path.basename(file)} failed (exit ${code}): ${out.trim()}`)),
    );
  });
}

const httpStatus = (err: unknown) =>
  (err as { $metadata?: { httpStatusCode?: number } })?.$metadata?.httpStatusCode;
const notFound = (err: unknown) =>
  httpStatus(err) === 404 || (err as Error)?.name === "NotFound" || (err as Error)?.name === "NoSuchKey";

async function objectExists(key: string): Promise<boolean> {
  try {
    await s3().send(new HeadObjectCommand({ Bucket: env().S3_BUCKET, Key: key }));
    return true;
  } catch (err) {
    if (notFound(err)) return false;
    throw err;
  }
}

/** Streams an object through SHA-256; null when the bucket has no such object. */
async function hashStored(key: string): Promise<{ sha256: string; bytes: number } | null> {
  let body: Readable;
  try {
    body = (await s3().send(new GetObjectCommand({ Bucket: env().S3_BUCKET, Key: key }))).Body as Readable;
  } catch (err) {
    if (notFound(err)) return null;
    throw err;
  }
  const hash = createHash("sha256");
  let bytes = 0;
  for await (const chunk of body) {
    hash.update(chunk as Buffer);
    bytes += (chunk as Buffer).length;
  }
  return { sha256: hash.digest("hex"), bytes };
}

async function readBackup(dir: string): Promise<{ description: BackupDescription; manifest: Manifest }> {
  const read = async (name: string) => {
    try {
      return JSON.parse(await fs.readFile(path.join(dir, name), "utf8")) as unknown;
    } catch (err) {
      throw new Refused(
        `${path.join(dir, name)} could not be read (${(err as Error).message}): is ${dir} a backup made by \`npm run backup\`?`,
      );
    }
  };
  const description = descriptionSchema.safeParse(await read(descriptionFile));
  const issues = (e: z.ZodError) =>
    e.issues
      .slice(0, 3)
      .map((i) => `${i.path.join(".")}: ${i.message}`)
      .join("; ");
  if (!description.success)
    throw new Refused(
      `${descriptionFile} is not a backup description this version can read (${issues(description.error)})`,
    );
  const manifest = manifestSchema.safeParse(await read(manifestFile));
  if (!manifest.success)
    throw new Refused(`${manifestFile} is not a manifest this version can read (${issues(manifest.error)})`);
  return { description: description.data, manifest: manifest.data };
}

async function main(): Promise<number> {
  const args = argsSchema.parse({ dir: process.argv.slice(2).find((a) => !a.startsWith("--")) ?? "" });
  const extra = process.argv.slice(2).filter((a) => a.startsWith("--"));
  if (extra.length) throw new Refused(`unknown option ${extra.join(", ")}; usage: npm run restore -- DIR`);
  const dir = path.resolve(args.dir);
  const e = env();
  const ownerUrl = e.DATABASE_OWNER_URL;
  if (!ownerUrl)
    throw new Refused(
      'DATABASE_OWNER_URL is not set: the restore runs as the owner role of the target database (README, "Database roles")',
    );
  const { description, manifest } = await readBackup(dir);
  const differences: string[] = [];
  const notes: string[] = [];

  // The dump is the one the description names.
  const dumpPath = path.join(dir, dumpFile);
  const dump = await hashFile(dumpPath).catch(() => null);
  if (!dump) throw new Refused(`${dumpPath} is missing`);
  if (dump.sha256 !== description.database.sha256)
    throw new Refused(
      `${dumpFile}'s SHA-256 is ${dump.sha256}, not the ${description.database.sha256} the backup recorded: the dump is damaged`,
    );

  // The bucket must exist (production buckets are made with their versioning or object lock, not by this script).
  try {
    await s3().send(new HeadBucketCommand({ Bucket: e.S3_BUCKET }));
  } catch (err) {
    throw new Refused(
      `the bucket ${e.S3_BUCKET} at ${e.S3_ENDPOINT} cannot be reached (${(err as Error)?.name ?? "error"}): ` +
        `create it first, with versioning or object lock as for production`,
    );
  }

  const db = createDb(ownerUrl, 2);
  try {
    const target = databaseNameOf(ownerUrl);
    const { rows } = await sql<{ n: number }>`
      SELECT count(*)::int AS n FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
      WHERE c.relkind IN ('r', 'p') AND n.nspname NOT IN ('pg_catalog', 'information_schema') AND n.nspname NOT LIKE 'pg\\_%'`.execute(
      db,
    );
    if (rows[0].n > 0) {
      throw new Refused(
        `the database ${target} already holds ${rows[0].n} tables: a restore goes only ` +
          `into an empty database. Make one as the owner role, e.g. \`CREATE DATABASE ${target}_restored ` +
          `OWNER ${roleOf(ownerUrl)}\`, point DATABASE_OWNER_URL and DATABASE_URL at it, ` +
          `and run the restore again.`,
      );
    }

    // 1. The database, as the owner: everything it creates is the owner's, whatever role name the old cluster used.
    const { dbname, env: pgEnv } = pgConnection(ownerUrl);
    await runProgram(
      pgProgram("pg_restore"),
      [
        "--no-owner",
        "--no-privileges",
        "--single-transaction",
        "--exit-on-error",
        `--dbname=${dbname}`,
        dumpPath,
      ],
      pgEnv,
    );
    console.log(
      `database restored into ${target} from ${dumpFile} (${description.database.bytes} bytes, taken ${description.startedAt})`,
    );

    // 2. The app's role gets its rights again (they are the cluster's, not the dump's).
    if (e.DATABASE_URL && roleOf(e.DATABASE_URL) !== roleOf(ownerUrl)) {
      const appendOnly = await grantAppRole(db, roleOf(e.DATABASE_URL));
      console.log(
        `granted ${roleOf(e.DATABASE_URL)} its rights; append-only for it: ${appendOnly.join(", ")}`,
      );
    } else notes.push("DATABASE_URL names no separate app role: no grants were made");

    // 3. The objects, when the backup holds them; an object already in the bucket is never replaced.
    if (existsSync(path.join(dir, objectsDir))) {
      let put = 0;
      let kept = 0;
      for (const o of manifest.objects) {
        const file = objectPath(dir, o.key);
        if (!existsSync(file)) {
          differences.push(`${o.kind} object ${o.key} is not in the backup's ${objectsDir} folder`);
          continue;
        }
        if (await objectExists(o.key)) {
          kept++;
          continue;
        }
        const local = await hashFile(file);
        if ((o.sha256 && local.sha256 !== o.sha256) || (o.bytes !== null && local.bytes !== o.bytes)) {
          differences.push(
            `${o.kind} object ${o.key} in the backup is damaged: SHA-256 ${local.sha256}, ${local.bytes} ` +
              `bytes; the manifest says ${o.sha256 ?? "?"}, ${o.bytes ?? "?"} bytes; not put back`,
          );
          continue;
        }
        await s3().send(
          new PutObjectCommand({
            Bucket: e.S3_BUCKET,
            Key: o.key,
            Body: createReadStream(file),
            ContentLength: local.bytes,
            ContentType: objectContentType(o),
          }),
        );
        put++;
      }
      console.log(
        `objects: ${put} put back into ${e.S3_BUCKET}${kept ? `, ${kept} already there (left as they were)` : ""}`,
      );
    } else
      notes.push(
        `the backup holds no objects: the bucket ${e.S3_BUCKET} must already hold them (restored from its own replica or versions)`,
      );

    return await verify(db, description, manifest, differences, notes);
  } finally {
    await db.destroy();
  }
}

/** Checks the restored stack against the backup; prints the report; answers the exit code. */
async function verify(
  db: ReturnType<typeof createDb>,
  description: BackupDescription,
  manifest: Manifest,
  differences: string[],
  notes: string[],
): Promise<number> {
  // The provenance chain, end to end and against the bucket's checkpoints.
  const chain = await verifyChain(db);
  if (!chain.ok) {
    if (chain.brokenAt)
      differences.push(
        `the provenance chain is broken at entry ${chain.brokenAt.seq}: ${chain.brokenAt.reason}`,
      );
    if (chain.contradicts)
      differences.push(
        `the provenance chain contradicts checkpoint ${chain.contradicts.key}: ${chain.contradicts.reason}`,
      );
    for (const p of chain.checkpoints.problems) differences.push(p);
  }
  const head = chain.head;
  const want = description.chainHead;
  if ((head?.seq ?? null) !== (want?.seq ?? null) || (head?.hash ?? null) !== (want?.hash ?? null)) {
    differences.push(
      `the chain's head is ${head ? `entry ${head.seq} (${head.hash})` : "empty"}; the backup's was ${want ? `entry ${want.seq} (${want.hash})` : "empty"}`,
    );
  }
  if (chain.events !== description.counts.provenanceEvents)
    differences.push(
      `the log holds ${chain.events} entries; the backup counted ${description.counts.provenanceEvents}`,
    );

  // The restored record names the same objects as the manifest.
  const recorded = new Map<string, { sha256: string | null; bytes: number | null }>();
  for (const r of await db.selectFrom("transfers").select(["object_key", "sha256", "bytes"]).execute())
    recorded.set(r.object_key, { sha256: r.sha256, bytes: Number(r.bytes) });
  for (const r of await db
    .selectFrom("renders")
    .select(["object_key", "sha256", "bytes"])
    .where("object_key", "is not", null)
    .where("sha256", "is not", null)
    .execute())
    recorded.set(r.object_key!, { sha256: r.sha256, bytes: r.bytes });
  for (const r of await db
    .selectFrom("label_images")
    .select(["object_key", "thumbnail_key", "sha256", "bytes"])
    .where("state", "in", ["stored", "withdrawn"])
    .execute()) {
    recorded.set(r.object_key, { sha256: r.sha256, bytes: Number(r.bytes) });
    recorded.set(r.thumbnail_key!, { sha256: null, bytes: null });
  }
  for (const r of await db.selectFrom("chain_checkpoints").select("object_key").execute())
    recorded.set(r.object_key, { sha256: null, bytes: null });
  const inManifest = new Set(manifest.objects.map((o) => o.key));
  for (const key of recorded.keys())
    if (!inManifest.has(key))
      differences.push(`the restored database names object ${key}, which the manifest does not`);

  // Every object of the manifest, present and whole (streamed through SHA-256).
  let whole = 0;
  for (const o of manifest.objects) {
    const rec = recorded.get(o.key);
    if (!rec)
      differences.push(`${o.kind} object ${o.key} is in the manifest but not in the restored database`);
    else if (o.source === "record" && (rec.sha256 !== o.sha256 || rec.bytes !== o.bytes))
      differences.push(`the restored record of ${o.kind} object ${o.key} differs from the manifest`);
    let got: { sha256: string; bytes: number } | null;
    try {
      got = await hashStored(o.key);
    } catch (err) {
      differences.push(
        `${o.kind} object ${o.key} could not be read from the bucket (${(err as Error)?.name ?? "error"})`,
      );
      continue;
    }
    if (!got) differences.push(`${o.kind} object ${o.key} is missing from the bucket`);
    else if ((o.sha256 && got.sha256 !== o.sha256) || (o.bytes !== null && got.bytes !== o.bytes)) {
      differences.push(
        `${o.kind} object ${o.key} differs: the bucket holds ${got.bytes} bytes with SHA-256 ` +
          `${got.sha256}; the manifest says ${o.bytes ?? "?"} bytes, ${o.sha256 ?? "?"}`,
      );
    } else whole++;
  }

  console.log("");
  console.log("restore verification");
  console.log(
    `  backup: ${description.software}, taken ${description.startedAt} from ${description.database.name}`,
  );
  console.log(
    `  provenance chain: ${chain.ok ? "verified" : "NOT verified"}, ${chain.events} ` +
      `entries, head ${head ? `entry ${head.seq}` : "none"}, ${chain.checkpoints.checked} ` +
      `of ${chain.checkpoints.total} checkpoints met`,
  );
  console.log(
    `  objects: ${whole} of ${manifest.objects.length} present with the manifest's size and SHA-256`,
  );
  for (const n of notes) console.log(`  note: ${n}`);
  if (differences.length) {
    console.log(`  DIFFERENCES (${differences.length}):`);
    for (const d of differences) console.log(`  - ${d}`);
    console.log("restore NOT verified");
    return 1;
  }
  console.log("restore verified: no differences");
  return 0;
}

main()
  .then((code) => process.exit(code))
  .catch((err) => {
    console.error(
      `restore ${err instanceof Refused ? "refused" : "failed"}: ${err instanceof Error ? err.message : String(err)}`,
    );
    process.exit(2);
  });
