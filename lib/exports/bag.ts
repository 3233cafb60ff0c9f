import "server-only";
// BagIt 1.0 packages (RFC 8493) of an approved disc, or of an accession's approved discs,
// for the repository: data/ holds the flat transfers (the masters), the access copies, the
// label images, record.json and premis.xml; manifest-sha256.txt and manifest-sha512.txt,
// bag-info.txt and tagmanifest-sha256.txt describe them. Two ways out share one writer:
// a streamed zip (yazl, ZIP64 past 4 GB) and plain files under the delivery prefix of a
// bucket (multipart uploads for big objects). Both stream: no payload file is held in memory.
//
// Checksums. Each stored object's SHA-256 in the manifest is the one Rillbook recorded when
// it was stored (and fixity has checked since), never one recomputed blindly: the bytes are
// hashed as they pass (SHA-256 and SHA-512 on the same read), and an object whose SHA-256
// differs from its record stops the bag and raises the fixity alert (lib/fixity). A late
// mismatch cannot leave a bag that claims a wrong checksum, because the tag files come
// last: the payload is written first, file by file, each verified at its end before the
// next begins; the manifests, bag-info.txt and tagmanifest are written only once every
// payload file has passed (a zip's central directory comes after them, and a delivery's
// bagit.txt, the file that makes a folder a bag, is its very last object). A stopped zip
// download is cut off with an error, before any manifest, so what the browser got is not
// a bag at all; a stopped delivery deletes what it wrote. Before a download starts, the
// objects' sizes are looked at and their last fixity results read, so the usual failures
// (a missing object, one already found damaged) answer a plain 409 before any byte goes out.
import { createHash } from "node:crypto";
import { PassThrough, Readable, Transform, type TransformCallback } from "node:stream";
import {
  AbortMultipartUploadCommand,
  CompleteMultipartUploadCommand,
  CreateMultipartUploadCommand,
  DeleteObjectCommand,
  HeadObjectCommand,
  PutObjectCommand,
  UploadPartCommand,
} from "@aws-sdk/client-s3";
import { sql } from "kysely";
import yazl from "yazl";
import { db } from "../../db";
import { env } from "../env";
import { recordFixityResult, type StoredObject } from "../fixity";
import { AppError } from "../http/errors";
import { appendEvent } from "../provenance";
import { getSettings } from "../settings";
import { fromStore, isObjectMissing } from "../storage/errors";
import { objectStream } from "../storage/objects";
import { s3 } from "../storage/s3";
import { softwareName } from "../version";
import { bagInfoText, bagitTxt, bagSize, baggingDate, bagStamp, manifestText, payloadOxum } from "./bagit";
import { premisXml } from "./premis";
import { type DiscRecordExport, discRecord, fileNameBase, premisRecord } from "./record";

/** A stored object of the payload: read from the bucket and checked against its record as it passes. */
interface PayloadObject {
  /** Path inside the bag, "data/…". */
  path: string;
  object: StoredObject;
  bytes: number;
}

/** A payload file made here (record.json, premis.xml). */
interface PayloadText {
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

const safe = (s: string) => s.replace(/[^A-Za-z0-9._-]+/g, "_");

const extensionOf = { jpeg: "jpg", png: "png", tiff: "tif" } as const;

/** The payload of one approved disc, its paths under `dir` ("data/" or "data/<shelf mark>/"). */
function discPayload(record: DiscRecordExport, dir: string) {
  const unapproved = record.disc.sides.filter((s) => s.status !== "approved");
  if (!record.disc.sides.length || unapproved.length) {
    throw new AppError(
      "conflict",
      409,
      `Only an approved disc is packaged: ${
        unapproved.length
          ? `side ${unapproved.map((s) => s.designation).join(", ")} of ${record.disc.shelfMark} ${unapproved.length > 1 ? "are" : "is"} not approved yet`
          : `${record.disc.shelfMark} has no sides`
      }.`,
    );
  }
  const base = fileNameBase(record.disc.shelfMark);
  const objects: PayloadObject[] = [];
  const copies = new Map(record.accessCopies.map((a) => [a.id, a]));
  const transfers = new Map(record.transfers.map((t) => [t.id, t]));
  for (const side of record.disc.sides) {
    // The side's masters and copies are those its approval binds, never simply the latest.
    const approved = record.approved[side.id];
    const transfer = approved ? transfers.get(approved.transfer.id) : undefined;
    const copy = approved ? copies.get(approved.render.id) : undefined;
    const sideName = safe(side.designation);
    if (!transfer || transfer.sha256 !== approved?.transfer.sha256)
      throw new AppError(
        "conflict",
        409,
        `Side ${side.designation} of ${record.disc.shelfMark} has no approved flat transfer.`,
      );
    if (!copy?.objectKey || !copy.sha256 || copy.sha256 !== approved?.render.sha256)
      throw new AppError(
        "conflict",
        409,
        `Side ${side.designation} of ${record.disc.shelfMark} has no approved access copy.`,
      );
    objects.push({
      path: `${dir}transfers/${base}-${sideName}-flat.wav`,
      bytes: Number(transfer.bytes),
      object: {
        kind: "transfer",
        id: transfer.id,
        key: transfer.objectKey,
        sha256: transfer.sha256,
        sideId: side.id,
        discId: record.disc.id,
        storedAt: new Date(transfer.createdAt),
      },
    });
    objects.push({
      path: `${dir}access/${base}-${sideName}-access.wav`,
      bytes: Number(copy.bytes),
      object: {
        kind: "render",
        id: copy.id,
        key: copy.objectKey,
        sha256: copy.sha256,
        sideId: side.id,
        discId: record.disc.id,
        storedAt: new Date(copy.finishedAt ?? 0),
      },
    });
  }
  const counts = new Map<string, number>();
  for (const l of record.labelImages) {
    const who = l.kind === "sleeve" ? "sleeve" : `${safe(l.side ?? "side")}-label`;
    const n = (counts.get(who) ?? 0) + 1;
    counts.set(who, n);
    objects.push({
      path: `${dir}labels/${base}-${who}-${n}.${extensionOf[l.format]}`,
      bytes: l.bytes,
      object: {
        kind: "label_image",
        id: l.id,
        key: l.objectKey,
        sha256: l.sha256,
        sideId: l.sideId,
        discId: record.disc.id,
        storedAt: new Date(l.storedAt),
      },
    });
  }
  const texts: PayloadText[] = [
    { path: `${dir}record.json`, content: Buffer.from(`${JSON.stringify(record, null, 2)}\n`) },
    { path: `${dir}premis.xml`, content: Buffer.from(premisXml(premisRecord([record]))) },
  ];
  return { objects, texts };
}

/** The bag of one approved disc. */
export async function planDiscBag(discId: string, at = new Date()): Promise<BagPlan> {
  const record = await discRecord(discId);
  const { objects, texts } = discPayload(record, "data/");
  return {
    scope: "disc",
    name: `${fileNameBase(record.disc.shelfMark)}-bag-${bagStamp(at)}`,
    externalIdentifier: record.disc.shelfMark,
    accession: { id: record.accession.id, identifier: record.accession.identifier },
    discs: [{ id: record.disc.id, shelfMark: record.disc.shelfMark }],
    objects,
    texts,
    at,
  };
}

/** The bag of an accession: each approved disc in its own folder of data/, with the accession's record beside them. */
export async function planAccessionBag(accessionId: string, at = new Date()): Promise<BagPlan> {
  if (!/^[0-9a-f-]{36}$/i.test(accessionId)) throw new AppError("not_found", 404, "No such accession.");
  const accession = await db
    .selectFrom("accessions")
    .select(["id", "identifier", "source", "received_on as receivedOn", "notes"])
    .where("id", "=", accessionId)
    .executeTakeFirst();
  if (!accession) throw new AppError("not_found", 404, "No such accession.");
  // Discs whose every side is approved (and which have sides at all).
  const discs = await db
    .selectFrom("discs as d")
    .select(["d.id", "d.shelf_mark as shelfMark"])
    .where("d.accession_id", "=", accessionId)
    .where((eb) =>
      eb
        .exists(eb.selectFrom("sides as s").select("s.id").whereRef("s.disc_id", "=", "d.id"))
        .and(
          eb.not(
            eb.exists(
              eb
                .selectFrom("sides as s")
                .select("s.id")
                .whereRef("s.disc_id", "=", "d.id")
                .where("s.status", "<>", "approved"),
            ),
          ),
        ),
    )
    .orderBy("d.shelf_mark")
    .execute();
  if (!discs.length)
    throw new AppError(
      "conflict",
      409,
      `Accession ${accession.identifier} has no approved disc yet: a bag holds approved discs only.`,
    );
  const objects: PayloadObject[] = [];
  const texts: PayloadText[] = [];
  const records: DiscRecordExport[] = [];
  for (const d of discs) {
    const record = await discRecord(d.id);
    records.push(record);
    const part = discPayload(record, `data/${fileNameBase(d.shelfMark)}/`);
    objects.push(...part.objects);
    texts.push(...part.texts);
  }
  texts.push({
    path: "data/accession.json",
    content: Buffer.from(
      `${JSON.stringify({ accession, discs: discs.map((d) => ({ id: d.id, shelfMark: d.shelfMark, folder: `data/${fileNameBase(d.shelfMark)}/` })) }, null, 2)}\n`,
    ),
  });
  texts.push({ path: "data/premis.xml", content: Buffer.from(premisXml(premisRecord(records))) });
  return {
    scope: "accession",
    name: `${fileNameBase(accession.identifier)}-bag-${bagStamp(at)}`,
    externalIdentifier: accession.identifier,
    accession: { id: accession.id, identifier: accession.identifier },
    discs,
    objects,
    texts,
    at,
  };
}

/**
 * Before any byte goes out: every payload object is in the bucket at its recorded size,
 * and none has an open fixity failure (its last check failed). Answers a plain 409 naming
 * the file; the full SHA-256 check happens as the bytes pass.
 */
export async function preflight(plan: BagPlan): Promise<void> {
  const ids = plan.objects.map((o) => o.object.id);
  if (ids.length) {
    const failing = await db
      .selectFrom("fixity_checks as f")
      .select(["f.object_id", "f.outcome"])
      .where("f.object_id", "in", ids)
      .where("f.outcome", "<>", "pass")
      .where((eb) =>
        eb.not(
          eb.exists(
            eb
              .selectFrom("fixity_checks as later")
              .select("later.id")
              .whereRef("later.object_id", "=", "f.object_id")
              .whereRef("later.checked_at", ">", "f.checked_at"),
          ),
        ),
      )
      .execute();
    if (failing.length) {
      const o = plan.objects.find((x) => x.object.id === failing[0].object_id)!;
      throw new AppError(
        "conflict",
        409,
        `The package cannot be made: ${o.path.replace(/^data\//, "")} failed its last fixity check (${failing[0].outcome}). ` +
          "Restore the file from a replica and check it again first.",
      );
    }
  }
  for (const o of plan.objects) {
    try {
      const head = await fromStore(`look at ${o.object.key}`, () =>
        s3().send(new HeadObjectCommand({ Bucket: env().S3_BUCKET, Key: o.object.key })),
      );
      const size = Number(head.ContentLength ?? -1);
      if (size !== o.bytes)
        await mismatch(plan, o, null, size, `it has ${size} bytes, the record ${o.bytes}`);
    } catch (err) {
      if (err instanceof PayloadMismatchError) throw new AppError("conflict", 409, err.message);
      if (isObjectMissing(err)) {
        await recordFixityResult(db, o.object, {
          outcome: "missing",
          actual: null,
          bytes: null,
          detail: "the object is not in the bucket",
          readFor: `packaging the bag ${plan.name}`,
        });
        throw new AppError(
          "conflict",
          409,
          `The package cannot be made: ${o.path.replace(/^data\//, "")} is missing from the file store. The fixity alert is raised.`,
        );
      }
      throw err;
    }
  }
}

/** Records the mismatch as a fixity result (the alert, the curators' mail) and answers the error that stops the bag. */
async function mismatch(
  plan: BagPlan,
  o: PayloadObject,
  actualSha256: string | null,
  bytes: number,
  detail: string,
): Promise<never> {
  await recordFixityResult(db, o.object, {
    outcome: "mismatch",
    actual: actualSha256,
    bytes,
    detail,
    readFor: `packaging the bag ${plan.name}`,
  }).catch((err) =>
    console.error("[rillbook] could not record the fixity mismatch found while packaging:", err),
  );
  throw new PayloadMismatchError(o.object, o.path, detail);
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
 * Writes the bag into the sink: payload first (each object verified at its end), then the
 * tag files. Records the packaging as a provenance event once the bag is whole.
 */
export async function writeBag(
  plan: BagPlan,
  sink: BagSink,
  how: { way: "download" | "delivery"; actorId: string; location?: string },
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
      if (verifier.sha256 && (verifier.sha256 !== o.object.sha256 || verifier.bytes !== o.bytes))
        await mismatch(plan, o, verifier.sha256, verifier.bytes, (err as Error).message);
      throw err;
    }
    // The recorded SHA-256 (which this read has just confirmed), and the SHA-512 of the same read.
    m256.push({ path: o.path, digest: o.object.sha256 });
    m512.push({ path: o.path, digest: verifier.sha512 });
  }
  const payload = [...plan.texts.map((t) => ({ bytes: t.content.length })), ...plan.objects];
  const oxum = payloadOxum(payload);
  const totalBytes = payload.reduce((n, f) => n + f.bytes, 0);
  const s = await getSettings();
  const info = bagInfoText([
    ["Source-Organization", env().LAB_NAME],
    ["Organization-Address", s.contactAddress],
    ["Contact-Name", s.contactName],
    ["Contact-Phone", s.contactPhone],
    ["Contact-Email", s.contactEmail],
    ["External-Description", bagDescription(plan)],
    ["Bagging-Date", baggingDate(plan.at)],
    ["External-Identifier", plan.externalIdentifier],
    ["Bag-Group-Identifier", plan.scope === "disc" ? plan.accession.identifier : undefined],
    ["Bag-Software-Agent", softwareName()],
    ["Payload-Oxum", oxum],
    ["Bag-Size", bagSize(totalBytes)],
  ]);
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
  await recordPackaging(plan, result, how);
  return result;
}

function bagDescription(plan: BagPlan): string {
  return plan.scope === "disc"
    ? `Approved disc ${plan.discs[0].shelfMark} of accession ${plan.accession.identifier}: flat transfers, access copies, label images, record and PREMIS.`
    : `Accession ${plan.accession.identifier}: its ${plan.discs.length} approved disc${plan.discs.length === 1 ? "" : "s"} (${plan.discs.map((d) => d.shelfMark).join(", ")}), each with flat transfers, access copies, label images, record and PREMIS.`;
}

/** The packaging event: one per bag, on the disc (a disc's bag) or the accession (an accession's). */
async function recordPackaging(
  plan: BagPlan,
  result: BagResult,
  how: { way: "download" | "delivery"; actorId: string; location?: string },
): Promise<void> {
  await db.transaction().execute(async (trx) => {
    await appendEvent(trx, {
      actorId: how.actorId,
      kind: plan.scope === "disc" ? "disc.packaged" : "accession.packaged",
      subjectType: plan.scope === "disc" ? "disc" : "accession",
      subjectId: plan.scope === "disc" ? plan.discs[0].id : plan.accession.id,
      discId: plan.scope === "disc" ? plan.discs[0].id : null,
      payload: {
        bag: result.name,
        way: how.way,
        ...(how.location ? { location: how.location } : {}),
        bagItVersion: "1.0",
        payloadOxum: result.payloadOxum,
        files: result.files,
        bytes: result.bytes,
        tagmanifestSha256: result.tagmanifestSha256,
        discs: plan.discs.map((d) => d.shelfMark),
      },
    });
  });
}

/**
 * The bag as a streamed zip: every entry stored (audio and images gain nothing from
 * deflate), ZIP64 where sizes pass 4 GB (yazl writes it as needed), under one folder named
 * as the bag. A failure (a mismatch, the store going away) cuts the stream off with an error.
 */
export function zipBag(plan: BagPlan, actorId: string): Readable {
  const zip = new yazl.ZipFile();
  const out = new PassThrough();
  (zip.outputStream as unknown as Readable).pipe(out);
  const sink: BagSink = {
    putText(p, content) {
      zip.addBuffer(content, `${plan.name}/${p}`, { compress: false });
      return Promise.resolve();
    },
    putStream(p, body, bytes) {
      return new Promise<void>((resolve, reject) => {
        body.once("error", reject);
        body.once("end", resolve);
        zip.addReadStreamLazy(`${plan.name}/${p}`, { compress: false, size: bytes }, (cb) => cb(null, body));
      });
    },
  };
  writeBag(plan, sink, { way: "download", actorId }).then(
    () => zip.end(),
    (err: unknown) => {
      console.error(`[rillbook] the bag ${plan.name} was stopped:`, err instanceof Error ? err.message : err);
      out.destroy(err instanceof Error ? err : new Error(String(err)));
    },
  );
  return out;
}

/** Where delivered bags go: DELIVERY_S3_BUCKET (or the lab's bucket) under DELIVERY_PREFIX. */
export function deliveryTarget(): { bucket: string; prefix: string } {
  const e = env();
  return { bucket: e.DELIVERY_S3_BUCKET ?? e.S3_BUCKET, prefix: e.DELIVERY_PREFIX };
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

/** Runs one delivery: the bag written into the delivery bucket, its state kept in bag_deliveries. */
export async function runDelivery(deliveryId: string): Promise<void> {
  const d = await db
    .updateTable("bag_deliveries")
    .set({ state: "running", started_at: sql<Date>`now()` })
    .where("id", "=", deliveryId)
    .where("state", "=", "queued")
    .returningAll()
    .executeTakeFirst();
  if (!d) return;
  let sink: ReturnType<typeof bucketSink> | undefined;
  try {
    const plan =
      d.scope === "disc"
        ? await planDiscBag(d.disc_id!, new Date(d.requested_at))
        : await planAccessionBag(d.accession_id!, new Date(d.requested_at));
    await preflight(plan);
    const folder = `${d.prefix}${plan.name}/`;
    sink = bucketSink(d.bucket, folder);
    const result = await writeBag(plan, sink, {
      way: "delivery",
      actorId: d.requested_by,
      location: `s3://${d.bucket}/${folder}`,
    });
    await db
      .updateTable("bag_deliveries")
      .set({
        state: "done",
        prefix: folder,
        payload_oxum: result.payloadOxum,
        tagmanifest_sha256: result.tagmanifestSha256,
        finished_at: sql<Date>`now()`,
      })
      .where("id", "=", d.id)
      .execute();
  } catch (err) {
    await sink?.removeAll();
    const message = err instanceof Error ? err.message : String(err);
    console.error(`[rillbook] delivery ${d.id} failed:`, message);
    await db
      .updateTable("bag_deliveries")
      .set({ state: "failed", error: message.slice(0, 2000), finished_at: sql<Date>`now()` })
      .where("id", "=", d.id)
      .execute();
  }
}
