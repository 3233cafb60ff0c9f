// The BagIt writer (RFC 8493): the bag's files written in order into a sink (a zip stream or
// a bucket folder), each stored object read once from the bucket, hashed SHA-256 and SHA-512
// on that read and checked against its record before the next begins; the tag files last.
// No database and no framework: lib/exports/bag.ts plans bags and records them, and
// scripts/bench/package.ts measures this writer's memory on its own bucket.
import { createHash } from "node:crypto";
import { PassThrough, type Readable, Transform, type TransformCallback } from "node:stream";
import {
  AbortMultipartUploadCommand,
  CompleteMultipartUploadCommand,
  CreateMultipartUploadCommand,
  DeleteObjectCommand,
  PutObjectCommand,
  UploadPartCommand,
} from "@aws-sdk/client-s3";
import yazl from "yazl";
import type { StoredObject } from "../fixity";
import { fromStore } from "../storage/errors";
import { objectStream } from "../storage/objects";
import { s3 } from "../storage/s3";
import { bagInfoText, bagitTxt, bagSize, manifestText, payloadOxum } from "./bagit";

/** A stored object of the payload: read from the bucket and checked against its record as it passes. */
export interface PayloadObject {
  /** Path inside the bag, "data/…". */
  path: string;
  object: StoredObject;
  bytes: number;
}

/** A payload file made here (record.json, premis.xml). */
export interface PayloadText {
  path: string;
  content: Buffer;
}

export interface BagPlan {
  scope: "disc" | "accession";
  /** The bag's name: its base directory, and the zip's name without ".zip". */
  name: string;
  externalIdentifier: string;
  accession: { id: string; identifier: string };
  discs: { id: string; shelfMark: string }[];
  objects: PayloadObject[];
  texts: PayloadText[];
  at: Date;
}

export interface BagResult {
  name: string;
  payloadOxum: string;
  /** The bag's own checksum: SHA-256 of its tagmanifest-sha256.txt, which fixes every tag file and through the manifests every payload file. */
  tagmanifestSha256: string;
  files: number;
  bytes: number;
}

/** A payload object whose bytes no longer match the checksum recorded when it was stored. */
export class PayloadMismatchError extends Error {
  constructor(
    readonly object: StoredObject,
    readonly path: string,
    readonly detail: string,
  ) {
    super(
      `The package was stopped: ${path} no longer matches its record (${detail}). ` +
        "The fixity alert is raised and the curators are mailed; restore the file from a replica before packaging again.",
    );
    this.name = "PayloadMismatchError";
  }
}

/**
 * Passes the bytes through, hashing SHA-256 and SHA-512 and counting; at the end compares
 * with the record, and fails the stream (before signalling its end) on any difference.
 */
class Verifier extends Transform {
  private readonly h256 = createHash("sha256");
  private readonly h512 = createHash("sha512");
  bytes = 0;
  sha256 = "";
  sha512 = "";
  constructor(private readonly expected: { sha256: string; bytes: number }) {
    super();
  }
  _transform(chunk: Buffer, _enc: BufferEncoding, cb: TransformCallback) {
    this.h256.update(chunk);
    this.h512.update(chunk);
    this.bytes += chunk.length;
    cb(null, chunk);
  }
  _flush(cb: TransformCallback) {
    this.sha256 = this.h256.digest("hex");
    this.sha512 = this.h512.digest("hex");
    if (this.bytes !== this.expected.bytes)
      return cb(new Error(`read ${this.bytes} bytes, the record says ${this.expected.bytes}`));
    if (this.sha256 !== this.expected.sha256)
      return cb(new Error(`stored SHA-256 ${this.expected.sha256}, read back ${this.sha256}`));
    cb();
  }
}

/** Where a bag's files go: each call writes one whole file, in the order the bag is made. */
export interface BagSink {
  /** Writes one file from a stream of known size; resolves when all of it is written. */
  putStream(path: string, body: Readable, bytes: number): Promise<void>;
  putText(path: string, content: Buffer): Promise<void>;
}

const sha = (alg: "sha256" | "sha512", b: Buffer) => createHash(alg).update(b).digest("hex");

/**
 * Writes the bag into the sink: payload first (each object verified at its end, a
 * mismatch handed to `onMismatch` and the bag stopped), then the tag files, bagit.txt last.
 * `info` gives bag-info.txt's fields other than Payload-Oxum and Bag-Size, which it adds.
 */
export async function writeBagFiles(
  plan: Pick<BagPlan, "name" | "objects" | "texts">,
  sink: BagSink,
  opts: {
    info: [string, string | null | undefined][];
    onMismatch?: (o: PayloadObject, actualSha256: string, bytes: number, detail: string) => Promise<void>;
  },
): Promise<BagResult> {
  const m256: { path: string; digest: string }[] = [];
  const m512: { path: string; digest: string }[] = [];
  for (const t of plan.texts) {
    await sink.putText(t.path, t.content);
    m256.push({ path: t.path, digest: sha("sha256", t.content) });
    m512.push({ path: t.path, digest: sha("sha512", t.content) });
  }
  for (const o of plan.objects) {
    const body = await objectStream(o.object.key);
    const verifier = new Verifier({ sha256: o.object.sha256, bytes: o.bytes });
    body.on("error", (err) => verifier.destroy(err));
    try {
      await sink.putStream(o.path, body.pipe(verifier), o.bytes);
    } catch (err) {
      body.destroy();
      // The verifier's own complaint is a mismatch; anything else (the store, the sink) passes through.
      if (verifier.sha256 && (verifier.sha256 !== o.object.sha256 || verifier.bytes !== o.bytes)) {
        const detail = (err as Error).message;
        await opts.onMismatch?.(o, verifier.sha256, verifier.bytes, detail);
        throw new PayloadMismatchError(o.object, o.path, detail);
      }
      throw err;
    }
    // The recorded SHA-256 (which this read has just confirmed), and the SHA-512 of the same read.
    m256.push({ path: o.path, digest: o.object.sha256 });
    m512.push({ path: o.path, digest: verifier.sha512 });
  }
  const payload = [...plan.texts.map((t) => ({ bytes: t.content.length })), ...plan.objects];
  const oxum = payloadOxum(payload);
  const totalBytes = payload.reduce((n, f) => n + f.bytes, 0);
  const info = bagInfoText([...opts.info, ["Payload-Oxum", oxum], ["Bag-Size", bagSize(totalBytes)]]);
  const tags: [string, Buffer][] = [
    ["manifest-sha256.txt", Buffer.from(manifestText(m256))],
    ["manifest-sha512.txt", Buffer.from(manifestText(m512))],
    ["bag-info.txt", Buffer.from(info)],
    ["bagit.txt", Buffer.from(bagitTxt)],
  ];
  const tagmanifest = Buffer.from(
    manifestText(tags.map(([p, b]) => ({ path: p, digest: sha("sha256", b) }))),
  );
  // bagit.txt last of all: a folder is a bag only once everything else is in it.
  for (const [p, b] of tags.filter(([p]) => p !== "bagit.txt")) await sink.putText(p, b);
  await sink.putText("tagmanifest-sha256.txt", tagmanifest);
  await sink.putText("bagit.txt", Buffer.from(bagitTxt));
  const result: BagResult = {
    name: plan.name,
    payloadOxum: oxum,
    tagmanifestSha256: sha("sha256", tagmanifest),
    files: payload.length,
    bytes: totalBytes,
  };
  return result;
}

/**
 * A zip of the bag, streamed: every entry stored (audio and images gain nothing from
 * deflate), ZIP64 where sizes pass 4 GB (yazl writes it as needed), under one folder named
 * as the bag. `finish()` writes the central directory; `fail(err)` cuts the stream off.
 */
export function zipSink(folder: string): {
  sink: BagSink;
  stream: Readable;
  finish(): void;
  fail(err: unknown): void;
} {
  const zip = new yazl.ZipFile();
  const out = new PassThrough();
  (zip.outputStream as unknown as Readable).pipe(out);
  return {
    stream: out,
    finish: () => zip.end(),
    fail: (err) => out.destroy(err instanceof Error ? err : new Error(String(err))),
    sink: {
      putText(p, content) {
        zip.addBuffer(content, `${folder}/${p}`, { compress: false });
        return Promise.resolve();
      },
      putStream(p, body, bytes) {
        return new Promise<void>((resolve, reject) => {
          body.once("error", reject);
          body.once("end", resolve);
          zip.addReadStreamLazy(`${folder}/${p}`, { compress: false, size: bytes }, (cb) => cb(null, body));
        });
      },
    },
  };
}

/** Parts of 16 MiB, more where needed to stay within S3's 10 000 parts. */
export function deliveryPartSize(bytes: number): number {
  const min = 16 * 1024 * 1024;
  return Math.max(min, Math.ceil(bytes / 9_000 / min) * min);
}

/**
 * Writes the bag as plain files under `<prefix><bag name>/` in the delivery bucket: small
 * files in one PUT, larger ones as multipart uploads holding one part in memory at a time.
 * On failure, every object it wrote is deleted again.
 */
export function bucketSink(
  bucket: string,
  folder: string,
): BagSink & { written: string[]; removeAll(): Promise<void> } {
  const written: string[] = [];
  const put = async (key: string, body: Buffer) => {
    await fromStore(`write ${key}`, () =>
      s3().send(new PutObjectCommand({ Bucket: bucket, Key: key, Body: body })),
    );
    written.push(key);
  };
  return {
    written,
    async putText(p, content) {
      await put(`${folder}${p}`, content);
    },
    async putStream(p, body, bytes) {
      const key = `${folder}${p}`;
      const partSize = deliveryPartSize(bytes);
      if (bytes <= partSize) {
        const chunks: Buffer[] = [];
        for await (const c of body) chunks.push(c as Buffer);
        await put(key, Buffer.concat(chunks));
        return;
      }
      const created = await fromStore(`start writing ${key}`, () =>
        s3().send(new CreateMultipartUploadCommand({ Bucket: bucket, Key: key })),
      );
      const uploadId = created.UploadId!;
      const parts: { PartNumber: number; ETag: string }[] = [];
      try {
        let pending: Buffer[] = [];
        let pendingBytes = 0;
        const flush = async () => {
          const part = Buffer.concat(pending, pendingBytes);
          pending = [];
          pendingBytes = 0;
          const n = parts.length + 1;
          const res = await fromStore(`write part ${n} of ${key}`, () =>
            s3().send(
              new UploadPartCommand({
                Bucket: bucket,
                Key: key,
                UploadId: uploadId,
                PartNumber: n,
                Body: part,
              }),
            ),
          );
          parts.push({ PartNumber: n, ETag: res.ETag! });
        };
        for await (const c of body) {
          let chunk = c as Buffer;
          while (pendingBytes + chunk.length >= partSize) {
            const take = partSize - pendingBytes;
            pending.push(chunk.subarray(0, take));
            pendingBytes += take;
            chunk = chunk.subarray(take);
            await flush();
          }
          if (chunk.length) {
            pending.push(chunk);
            pendingBytes += chunk.length;
          }
        }
        if (pendingBytes) await flush();
        await fromStore(`finish writing ${key}`, () =>
          s3().send(
            new CompleteMultipartUploadCommand({
              Bucket: bucket,
              Key: key,
              UploadId: uploadId,
              MultipartUpload: { Parts: parts },
            }),
          ),
        );
        written.push(key);
      } catch (err) {
        await s3()
          .send(new AbortMultipartUploadCommand({ Bucket: bucket, Key: key, UploadId: uploadId }))
          .catch(() => undefined);
        throw err;
      }
    },
    async removeAll() {
      for (const k of written.splice(0))
        await s3()
          .send(new DeleteObjectCommand({ Bucket: bucket, Key: k }))
          .catch((err) => console.error(`[rillbook] could not delete ${k} of a stopped delivery:`, err));
    },
  };
}
