// Memory of the BagIt writer on a large accession: starts an s3rver of its own (storage/bench-package,
// port BENCH_S3_PORT), stores synthetic payload objects in it, then writes the bag both ways
// the lab does (lib/exports/bag-writer.ts, the code the app runs): as a streamed zip (read to
// the end and thrown away, as a slow browser would take it) and as plain files into the
// delivery prefix of the bucket. It samples this process's resident memory every 100 ms and
// prints the peak of each, with the time taken.
//   npx tsx scripts/bench/package.ts
//   BENCH_GB=50           payload of the zip bag in GB (decimal), default 50
//   BENCH_OBJECT_GB=5     size of each payload object, default 5 (so 10 objects for 50 GB)
//   BENCH_DELIVERY_GB=10  payload of the delivered bag (it is written to disk once more), default 10
//   BENCH_DISTINCT=1      store every object's bytes separately; by default one object is
//                         stored and the others are hard links to its file in s3rver's folder,
//                         so a 50 GB bag needs 5 GB of disk (the bytes still travel through the
//                         store, the verifier and the zip in full: what is measured is the same)
//   BENCH_KEEP=1          keep storage/bench-package (the objects) for another run
import { spawn } from "node:child_process";
import { createHash, randomBytes } from "node:crypto";
import { promises as fs } from "node:fs";
import net from "node:net";
import path from "node:path";
import { Readable, Writable } from "node:stream";
import { pipeline } from "node:stream/promises";

const GB = 1e9;
const totalBytes = Math.round(Number(process.env.BENCH_GB ?? 50) * GB);
const objectBytes = Math.round(Number(process.env.BENCH_OBJECT_GB ?? 5) * GB);
const deliveryBytes = Math.round(Number(process.env.BENCH_DELIVERY_GB ?? 10) * GB);
const distinct = process.env.BENCH_DISTINCT === "1";
const port = Number(process.env.BENCH_S3_PORT ?? 56721);
const bucket = "rillbook";
const dir = path.join(process.cwd(), "storage", "bench-package");

// The writer reads its bucket through lib/env: point it at the bench's own store before it loads.
Object.assign(process.env, {
  S3_ENDPOINT: `http://127.0.0.1:${port}`,
  S3_BUCKET: bucket,
  S3_ACCESS_KEY_ID: "S3RVER",
  S3_SECRET_ACCESS_KEY: "S3RVER",
  S3_FORCE_PATH_STYLE: "true",
});

const mib = (b: number) => `${(b / 1024 / 1024).toFixed(0)} MiB`;

/** Peak resident memory of this process while `fn` runs, sampled every 100 ms. */
async function measured<T>(fn: () => Promise<T>): Promise<{ value: T; peakRss: number; seconds: number }> {
  let peak = process.memoryUsage().rss;
  const timer = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 100);
  const t0 = performance.now();
  try {
    const value = await fn();
    peak = Math.max(peak, process.memoryUsage().rss);
    return { value, peakRss: peak, seconds: (performance.now() - t0) / 1000 };
  } finally {
    clearInterval(timer);
  }
}

async function waitForPort(p: number, timeoutMs = 20_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const ok = await new Promise<boolean>((resolve) => {
      const s = net.connect(p, "127.0.0.1", () => {
        s.end();
        resolve(true);
      });
      s.on("error", () => resolve(false));
    });
    if (ok) return;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`s3rver did not listen on ${p}`);
}

/** Random bytes, 1 MiB at a time: incompressible, like audio (their SHA-256 is worked out as they are stored). */
function syntheticBytes(bytes: number): Readable {
  let sent = 0;
  return new Readable({
    read() {
      if (sent >= bytes) return void this.push(null);
      const n = Math.min(1024 * 1024, bytes - sent);
      sent += n;
      this.push(randomBytes(n));
    },
  });
}

async function main() {
  const { bucketSink, writeBagFiles, zipSink } = await import("../../lib/exports/bag-writer");
  const { hashObject } = await import("../../lib/storage/objects");
  const { s3 } = await import("../../lib/storage/s3");
  type Plan = Parameters<typeof writeBagFiles>[0];

  const df = await new Promise<string>((resolve) => {
    const p = spawn("df", ["-B1", "--output=avail", process.cwd()]);
    let out = "";
    p.stdout.on("data", (d: Buffer) => (out += d.toString()));
    p.on("close", () => resolve(out));
  });
  const free = Number(df.trim().split("\n").pop());
  const objects = Math.ceil(totalBytes / objectBytes);
  const needed = (distinct ? totalBytes : objectBytes) * 2 + deliveryBytes * 2;
  console.log(
    `[bench] ${objects} objects of ${(objectBytes / GB).toFixed(1)} GB (${(totalBytes / GB).toFixed(1)} GB), ` +
      `${distinct ? "each stored" : "one stored and hard-linked"}; disk free ${(free / GB).toFixed(1)} GB, needed about ${(needed / GB).toFixed(1)} GB`,
  );
  if (needed > free * 0.8)
    throw new Error("not enough disk for this size: lower BENCH_GB or BENCH_OBJECT_GB");

  await fs.mkdir(path.join(dir, "s3"), { recursive: true });
  const server = spawn(process.execPath, ["--import", "tsx", "scripts/services/s3.ts"], {
    env: { ...process.env, S3_PORT: String(port), S3_DIR: path.join(dir, "s3"), S3_BUCKET: bucket },
    stdio: ["ignore", "inherit", "inherit"],
  });
  try {
    await waitForPort(port);
    const { CompleteMultipartUploadCommand, CreateMultipartUploadCommand, UploadPartCommand } =
      await import("@aws-sdk/client-s3");
    const keyOf = (i: number) => `transfers/bench/${i}/flat.wav`;
    const objectFile = (key: string, what: string) => path.join(dir, "s3", bucket, `${key}._S3rver_${what}`);

    /** Stores one synthetic object by multipart upload (64 MiB parts), hashing it on the way. */
    async function store(key: string): Promise<string> {
      const hash = createHash("sha256");
      const { UploadId } = await s3().send(new CreateMultipartUploadCommand({ Bucket: bucket, Key: key }));
      const parts: { PartNumber: number; ETag: string }[] = [];
      let pending: Buffer[] = [];
      let size = 0;
      const flush = async () => {
        const body = Buffer.concat(pending);
        pending = [];
        size = 0;
        const n = parts.length + 1;
        const r = await s3().send(
          new UploadPartCommand({ Bucket: bucket, Key: key, UploadId, PartNumber: n, Body: body }),
        );
        parts.push({ PartNumber: n, ETag: r.ETag! });
      };
      for await (const c of syntheticBytes(objectBytes)) {
        hash.update(c as Buffer);
        pending.push(c as Buffer);
        size += (c as Buffer).length;
        if (size >= 64 * 1024 * 1024) await flush();
      }
      if (size) await flush();
      await s3().send(
        new CompleteMultipartUploadCommand({
          Bucket: bucket,
          Key: key,
          UploadId,
          MultipartUpload: { Parts: parts },
        }),
      );
      return hash.digest("hex");
    }

    const shaFile = path.join(dir, `sha256-${objectBytes}.json`);
    const known = JSON.parse(await fs.readFile(shaFile, "utf8").catch(() => "{}")) as Record<string, string>;
    const t0 = performance.now();
    for (let i = 0; i < objects; i++) {
      const key = keyOf(i);
      if (known[key] && (await fs.stat(objectFile(key, "object")).catch(() => null))) continue;
      if (i > 0 && !distinct) {
        // The same bytes under another key: hard links to the first object's files in s3rver's folder.
        await fs.mkdir(path.dirname(objectFile(key, "object")), { recursive: true });
        for (const what of ["object", "object.md5", "metadata.json"])
          await fs
            .link(objectFile(keyOf(0), what), objectFile(key, what))
            .catch((err: NodeJS.ErrnoException) => {
              if (err.code !== "EEXIST") throw err;
            });
        known[key] = known[keyOf(0)];
      } else known[key] = await store(key);
      await fs.writeFile(shaFile, JSON.stringify(known));
    }
    console.log(`[bench] payload objects ready in ${((performance.now() - t0) / 1000).toFixed(0)} s`);
    // The first object read back by the app's own hashing, as fixity does: the recorded checksum is right.
    if ((await hashObject(keyOf(0))).sha256 !== known[keyOf(0)])
      throw new Error("the stored object reads back otherwise");

    const plan = (bytes: number, name: string): Plan => ({
      name,
      texts: [{ path: "data/record.json", content: Buffer.from(`${JSON.stringify({ bench: true })}\n`) }],
      objects: Array.from({ length: Math.ceil(bytes / objectBytes) }, (_, i) => ({
        path: `data/BENCH-${i}/transfers/BENCH-${i}-A-flat.wav`,
        bytes: objectBytes,
        object: {
          kind: "transfer" as const,
          id: `bench-${i}`,
          key: keyOf(i),
          sha256: known[keyOf(i)],
          sideId: null,
          discId: "bench",
          storedAt: new Date(),
        },
      })),
    });
    const info: [string, string][] = [["Source-Organization", "Bench"]];

    // (a) The zip, read to its end by a consumer that throws it away.
    const zipRun = await measured(async () => {
      const zip = zipSink("BENCH-bag");
      let zipBytes = 0;
      const drain = pipeline(
        zip.stream,
        new Writable({
          write(chunk: Buffer, _e, cb) {
            zipBytes += chunk.length;
            cb();
          },
        }),
      );
      const result = await writeBagFiles(plan(totalBytes, "BENCH-bag"), zip.sink, { info });
      zip.finish();
      await drain;
      return { result, zipBytes };
    });
    console.log(
      `[bench] zip: ${(zipRun.value.zipBytes / GB).toFixed(2)} GB (payload ${zipRun.value.result.payloadOxum}) in ` +
        `${zipRun.seconds.toFixed(0)} s (${(zipRun.value.zipBytes / GB / zipRun.seconds).toFixed(2)} GB/s); peak RSS ${mib(zipRun.peakRss)}`,
    );

    // (b) Plain files into the delivery prefix (multipart uploads of 16 MiB parts).
    const deliveryRun = await measured(async () => {
      const sink = bucketSink(bucket, "delivery/BENCH-bag/");
      const result = await writeBagFiles(plan(deliveryBytes, "BENCH-bag"), sink, { info });
      await sink.removeAll();
      return result;
    });
    console.log(
      `[bench] delivery: ${(deliveryBytes / GB).toFixed(2)} GB in ${deliveryRun.seconds.toFixed(0)} s; peak RSS ${mib(deliveryRun.peakRss)}`,
    );
    console.log(
      JSON.stringify({
        zip: {
          payloadBytes: totalBytes,
          seconds: Math.round(zipRun.seconds),
          peakRssMiB: Math.round(zipRun.peakRss / 2 ** 20),
        },
        delivery: {
          payloadBytes: deliveryBytes,
          seconds: Math.round(deliveryRun.seconds),
          peakRssMiB: Math.round(deliveryRun.peakRss / 2 ** 20),
        },
      }),
    );
  } finally {
    server.kill("SIGTERM");
    if (process.env.BENCH_KEEP !== "1") await fs.rm(dir, { recursive: true, force: true });
  }
}

main().then(
  () => process.exit(0),
  (err: unknown) => {
    console.error("[bench]", err);
    process.exit(1);
  },
);
