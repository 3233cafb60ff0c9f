// `npm run backup -- DIR [--with-objects]`: a consistent backup of the lab while it is in use.
//
// The database is dumped by pg_dump (custom format) from a snapshot this script exports
// from a REPEATABLE READ transaction; the manifest of objects and the counts are read in
// that same transaction, so dump and manifest describe one moment. With --with-objects,
// every object the manifest names is streamed from the bucket into DIR/objects/<key>,
// its SHA-256 checked against the record as it streams.
import "./lib/demo-env";
import { spawn } from "node:child_process";
import { createHash } from "node:crypto";
import { createWriteStream, promises as fs } from "node:fs";
import path from "node:path";
import type { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import { GetObjectCommand, HeadObjectCommand } from "@aws-sdk/client-s3";
import pg from "pg";
import { z } from "zod";
import { env } from "../lib/env";
import { s3 } from "../lib/storage/s3";
import { softwareName } from "../lib/version";
import {
  type BackupDescription,
  databaseNameOf,
  descriptionFile,
  descriptionSchema,
  dumpFile,
  hashFile,
  type Manifest,
  type ManifestObject,
  manifestFile,
  manifestSchema,
  objectPath,
  pgConnection,
  pgProgram,
} from "./lib/backup-format";

const argsSchema = z.object({
  dir: z.string().min(1, "name the folder to write the backup into: npm run backup -- DIR [--with-objects]"),
  withObjects: z.boolean(),
});

function parseArgs(argv: string[]) {
  const unknown = argv.filter((a) => a.startsWith("--") && a !== "--with-objects");
  if (unknown.length)
    throw new Error(`unknown option ${unknown.join(", ")}; usage: npm run backup -- DIR [--with-objects]`);
  const positional = argv.filter((a) => !a.startsWith("--"));
  if (positional.length > 1) throw new Error("name one folder: npm run backup -- DIR [--with-objects]");
  return argsSchema.parse({ dir: positional[0] ?? "", withObjects: argv.includes("--with-objects") });
}

function runProgram(file: string, args: string[], extraEnv: Record<string, string>): Promise<string> {
  return new Promise((resolve, reject) => {
    const child = spawn(file, args, {
      env: { ...process.env, ...extraEnv },
      stdio: ["ignore", "pipe", "pipe"],
    });
    let out = "";
    let err = "";
    child.stdout.on("data", (d) => (out += d));
    child.stderr.on("data", (d) => (err += d));
    child.on("error", reject);
    child.on("close", (code) =>
      code === 0
        ? resolve(out)
        : reject(new Error(`${path.basename(file)} failed (exit ${code}): ${err.trim()}`)),
    );
  });
}

async function storedSize(key: string): Promise<number | null> {
  try {
    const head = await s3().send(new HeadObjectCommand({ Bucket: env().S3_BUCKET, Key: key }));
    return Number(head.ContentLength ?? 0);
  } catch (err) {
    if (
      (err as { $metadata?: { httpStatusCode?: number } })?.$metadata?.httpStatusCode === 404 ||
      (err as Error)?.name === "NotFound"
    )
      return null;
    throw err;
  }
}

/** Streams one object into DIR/objects/<key> through SHA-256; answers what it measured. */
async function copyObject(dir: string, o: ManifestObject): Promise<{ sha256: string; bytes: number }> {
  const file = objectPath(dir, o.key);
  await fs.mkdir(path.dirname(file), { recursive: true });
  const partial = `${file}.partial`;
  const res = await s3().send(new GetObjectCommand({ Bucket: env().S3_BUCKET, Key: o.key }));
  const hash = createHash("sha256");
  let bytes = 0;
  const body = res.Body as Readable;
  body.on("data", (chunk: Buffer) => {
    hash.update(chunk);
    bytes += chunk.length;
  });
  try {
    await pipeline(body, createWriteStream(partial));
  } catch (err) {
    await fs.rm(partial, { force: true });
    throw err;
  }
  const sha256 = hash.digest("hex");
  if ((o.sha256 && sha256 !== o.sha256) || (o.bytes !== null && bytes !== o.bytes)) {
    await fs.rm(partial, { force: true });
    throw new Error(
      `${o.kind} object ${o.key} in the bucket differs from the record: ${bytes} bytes, ` +
        `SHA-256 ${sha256}; the record says ${o.bytes ?? "?"} bytes, ${o.sha256 ?? "?"}`,
    );
  }
  await fs.rename(partial, file);
  return { sha256, bytes };
}

async function main(): Promise<number> {
  const args = parseArgs(process.argv.slice(2));
  const e = env();
  const ownerUrl = e.DATABASE_OWNER_URL;
  if (!ownerUrl)
    throw new Error(
      'DATABASE_OWNER_URL is not set: the backup reads the whole database as its owner role (README, "Database roles")',
    );
  const dir = path.resolve(args.dir);
  await fs.mkdir(dir, { recursive: true });
  const existing = (await fs.readdir(dir)).filter((f) =>
    [dumpFile, manifestFile, descriptionFile].includes(f),
  );
  if (existing.length)
    throw new Error(`${dir} already holds a backup (${existing.join(", ")}): give an empty or new folder`);

  const startedAt = new Date().toISOString();
  const client = new pg.Client({ connectionString: ownerUrl });
  await client.connect();
  let manifest: Manifest;
  let description: Omit<BackupDescription, "finishedAt" | "database" | "counts"> & {
    counts: Omit<BackupDescription["counts"], "objects" | "objectBytes">;
  };
  let dbInfo: { serverVersion: string; snapshot: string; lastMigration: string | null };
  try {
    // The snapshot stays valid while this transaction is open: pg_dump imports it, and
    // everything below reads the very same state of the database.
    await client.query("BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY");
    const snapshot = (await client.query<{ s: string }>("SELECT pg_export_snapshot() AS s")).rows[0].s;
    const serverVersion = (await client.query<{ v: string }>("SELECT current_setting('server_version') AS v"))
      .rows[0].v;

    const dumpPath = path.join(dir, dumpFile);
    const { dbname, env: pgEnv } = pgConnection(ownerUrl);
    const dumping = runProgram(
      pgProgram("pg_dump"),
      ["--format=custom", `--snapshot=${snapshot}`, `--file=${dumpPath}`, `--dbname=${dbname}`],
      pgEnv,
    );

    const transfers = await client.query<{ id: string; object_key: string; sha256: string; bytes: string }>(
      "SELECT id, object_key, sha256, bytes FROM transfers ORDER BY created_at, id",
    );
    const renders = await client.query<{ id: string; object_key: string; sha256: string; bytes: number }>(
      "SELECT id, object_key, sha256, bytes FROM renders WHERE object_key IS NOT NULL AND sha256 IS NOT NULL ORDER BY created_at, id",
    );
    const labelImages = await client.query<{
      id: string;
      object_key: string;
      thumbnail_key: string;
      sha256: string;
      bytes: string;
    }>(
      "SELECT id, object_key, thumbnail_key, sha256, bytes FROM label_images WHERE state IN ('stored', 'withdrawn') ORDER BY created_at, id",
    );
    const checkpoints = await client.query<{ id: string; object_key: string }>(
      "SELECT id, object_key FROM chain_checkpoints ORDER BY head_seq, id",
    );
    const head = (
      await client.query<{ seq: string; hash: string }>(
        "SELECT seq, hash FROM provenance_events ORDER BY seq DESC LIMIT 1",
      )
    ).rows[0];
    const count = async (table: string) =>
      Number((await client.query<{ n: string }>(`SELECT count(*) AS n FROM ${table}`)).rows[0].n);
    const lastMigration =
      (
        await client
          .query<{ name: string }>("SELECT name FROM kysely_migration ORDER BY name DESC LIMIT 1")
          .catch(() => ({ rows: [] as { name: string }[] }))
      ).rows[0]?.name ?? null;

    const objects: ManifestObject[] = [
      ...transfers.rows.map((r) => ({
        kind: "transfer" as const,
        id: r.id,
        key: r.object_key,
        bytes: Number(r.bytes),
        sha256: r.sha256,
        source: "record" as const,
      })),
      ...renders.rows.map((r) => ({
        kind: "render" as const,
        id: r.id,
        key: r.object_key,
        bytes: Number(r.bytes),
        sha256: r.sha256,
        source: "record" as const,
      })),
      ...labelImages.rows.flatMap((r) => [
        {
          kind: "label_image" as const,
          id: r.id,
          key: r.object_key,
          bytes: Number(r.bytes),
          sha256: r.sha256,
          source: "record" as const,
        },
        {
          kind: "label_thumbnail" as const,
          id: r.id,
          key: r.thumbnail_key,
          bytes: null,
          sha256: null,
          source: "none" as const,
        },
      ]),
      ...checkpoints.rows.map((r) => ({
        kind: "checkpoint" as const,
        id: r.id,
        key: r.object_key,
        bytes: null,
        sha256: null,
        source: "none" as const,
      })),
    ];
    manifest = { kind: "rillbook.backup-manifest", version: 1, objects };
    description = {
      kind: "rillbook.backup",
      version: 1,
      software: softwareName(),
      startedAt,
      chainHead: head ? { seq: Number(head.seq), hash: head.hash } : null,
      counts: {
        provenanceEvents: await count("provenance_events"),
        discs: await count("discs"),
        sides: await count("sides"),
        transfers: transfers.rows.length,
        renders: renders.rows.length,
        checkpoints: checkpoints.rows.length,
        labelImages: labelImages.rows.length,
      },
      withObjects: args.withObjects,
      bucket: { endpoint: e.S3_ENDPOINT, name: e.S3_BUCKET },
      note: 'Restore with `npm run restore -- DIR` into an empty database and bucket (README, "Backup and restore").',
    };
    await dumping;
    dbInfo = { serverVersion, snapshot, lastMigration };
    await client.query("COMMIT");
  } catch (err) {
    await client.query("ROLLBACK").catch(() => undefined);
    throw err;
  } finally {
    await client.end();
  }

  // Objects are written once and never replaced, so copying after the snapshot still
  // yields what the record names; each is checked against the record's hash as it streams.
  const problems: string[] = [];
  let copied = 0;
  for (const o of manifest.objects) {
    try {
      if (args.withObjects) {
        const got = await copyObject(dir, o);
        if (o.source !== "record") Object.assign(o, { ...got, source: "measured" });
        copied++;
      } else {
        const size = await storedSize(o.key);
        if (size === null) problems.push(`${o.kind} object ${o.key} is missing from the bucket`);
        else if (o.bytes !== null && size !== o.bytes)
          problems.push(`${o.kind} object ${o.key} holds ${size} bytes; the record says ${o.bytes}`);
        else if (o.bytes === null) Object.assign(o, { bytes: size, source: "measured" });
      }
    } catch (err) {
      problems.push(err instanceof Error ? err.message : String(err));
    }
  }

  const dumpStat = await hashFile(path.join(dir, dumpFile));
  const dumpVersion = (await runProgram(pgProgram("pg_dump"), ["--version"], {})).trim();
  const finished: BackupDescription = {
    ...description,
    finishedAt: new Date().toISOString(),
    database: {
      name: databaseNameOf(ownerUrl),
      serverVersion: dbInfo.serverVersion,
      dumpVersion,
      file: dumpFile,
      bytes: dumpStat.bytes,
      sha256: dumpStat.sha256,
      snapshot: dbInfo.snapshot,
      lastMigration: dbInfo.lastMigration,
    },
    counts: {
      ...description.counts,
      objects: manifest.objects.length,
      objectBytes: manifest.objects.reduce((s, o) => s + (o.bytes ?? 0), 0),
    },
  };
  // Written only in the form the restore reads.
  await fs.writeFile(
    path.join(dir, manifestFile),
    `${JSON.stringify(manifestSchema.parse(manifest), null, 2)}\n`,
  );
  await fs.writeFile(
    path.join(dir, descriptionFile),
    `${JSON.stringify(descriptionSchema.parse(finished), null, 2)}\n`,
  );

  const c = finished.counts;
  console.log(`backup written to ${dir}`);
  console.log(
    `  database: ${finished.database.name}, ${dumpStat.bytes} bytes (pg_dump custom ` +
      `format), chain head ${finished.chainHead ? `entry ${finished.chainHead.seq}` : "none"}`,
  );
  console.log(
    `  manifest: ${c.objects} objects (${c.transfers} transfers, ${c.renders} renders, ${c.checkpoints} checkpoints), ${c.objectBytes} bytes`,
  );
  console.log(
    args.withObjects
      ? `  objects: ${copied} of ${c.objects} copied into ${path.join(dir, "objects")}`
      : "  objects: not copied (the bucket's own versioning or replication keeps them; --with-objects copies them)",
  );
  if (problems.length) {
    console.error(`backup finished with ${problems.length} problem(s):`);
    for (const p of problems) console.error(`  - ${p}`);
    return 1;
  }
  return 0;
}

main()
  .then((code) => process.exit(code))
  .catch((err) => {
    console.error(`backup failed: ${err instanceof Error ? err.message : String(err)}`);
    process.exit(2);
  });
