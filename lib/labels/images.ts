import "server-only";
// Label images: photographs or scans of a side's label or of the sleeve. The archivist's
// browser puts the file straight into the bucket through a presigned URL, under a key the
// server made from its own ids; the completion then reads the stored object back once
// (SHA-256, the size declared, the type its bytes show, a thumbnail made with sharp) and
// refuses anything that is not a JPEG, PNG or TIFF image or says it is another type than
// it is, deleting what it stored. A stored image is a preservation object: fixity checks
// it like every other, and the disc's bag carries it.
import { createHash, randomUUID } from "node:crypto";
import { createWriteStream, promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import type { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import { PutObjectCommand } from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { sql } from "kysely";
import sharp, { type Metadata } from "sharp";
import { db } from "../../db";
import type { LabelImageFormat } from "../../db/types";
import type { SessionUser } from "../auth/session-user";
import { env } from "../env";
import { AppError } from "../http/errors";
import { appendEvent } from "../provenance";
import { isObjectMissing, storeFailure } from "../storage/errors";
import { deleteObject, objectStream } from "../storage/objects";
import { s3 } from "../storage/s3";
import { labelImageExtension, storedLabelImages } from "./stored";
import {
  completeLabelImageSchema,
  labelImageTypes,
  type LabelImageType,
  startLabelImageSchema,
  withdrawLabelImageSchema,
} from "../validation/label-images";

/** An upload URL, and the pending row, last an hour: a label image is one PUT. */
const uploadLifetimeSeconds = 3600;
/** The longest side of a thumbnail, in pixels. */
export const thumbnailPx = 480;

const formatWords: Record<LabelImageFormat, string> = { jpeg: "JPEG", png: "PNG", tiff: "TIFF" };

/** The file's own type, from its first bytes (JPEG SOI marker, PNG signature, TIFF byte-order header). */
export function sniffImageFormat(head: Uint8Array): LabelImageFormat | null {
  const b = head;
  if (b.length >= 3 && b[0] === 0xff && b[1] === 0xd8 && b[2] === 0xff) return "jpeg";
  if (b.length >= 8 && [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a].every((v, i) => b[i] === v))
    return "png";
  // TIFF 6.0 §2: "II" then 42 little-endian, or "MM" then 42 big-endian (BigTIFF: 43).
  if (b.length >= 4 && b[0] === 0x49 && b[1] === 0x49 && (b[2] === 42 || b[2] === 43) && b[3] === 0)
    return "tiff";
  if (b.length >= 4 && b[0] === 0x4d && b[1] === 0x4d && b[2] === 0 && (b[3] === 42 || b[3] === 43))
    return "tiff";
  return null;
}

/** A few words on what other file the first bytes look like, for the refusal's message. */
function whatItLooksLike(head: Uint8Array): string {
  const text = Buffer.from(head.subarray(0, 16)).toString("latin1");
  if (text.startsWith("%PDF")) return "a PDF document";
  if (text.startsWith("RIFF") && text.slice(8, 12) === "WAVE") return "a WAVE audio file";
  if (text.startsWith("RIFF") && text.slice(8, 12) === "WEBP") return "a WebP image";
  if (text.startsWith("GIF8")) return "a GIF image";
  if (text.startsWith("PK")) return "a zip archive";
  if (/^\s*</.test(text)) return "text or markup";
  return "something else";
}

function objectKeyFor(discId: string, id: string, format: LabelImageFormat): string {
  return `labels/${discId}/${id}/original.${labelImageExtension[format]}`;
}

const thumbnailKeyFor = (discId: string, id: string) => `labels/${discId}/${id}/thumbnail.jpg`;

/**
 * Starts a label image: the server makes its id and key and a presigned PUT URL for it.
 * The browser sends the file there, then asks for the completion.
 */
export async function startLabelImage(actor: SessionUser, discId: string, input: unknown) {
  const v = startLabelImageSchema.parse(input);
  const disc = await db.selectFrom("discs").select("id").where("id", "=", discId).executeTakeFirst();
  if (!disc) throw new AppError("not_found", 404, "No such disc.");
  if (v.sideId) {
    const side = await db
      .selectFrom("sides")
      .select("id")
      .where("id", "=", v.sideId)
      .where("disc_id", "=", discId)
      .executeTakeFirst();
    if (!side)
      throw new AppError("invalid", 422, "That side is not one of this disc's.", {
        sideId: ["Not a side of this disc."],
      });
  }
  const id = randomUUID();
  const declared = labelImageTypes[v.contentType];
  const key = objectKeyFor(discId, id, declared);
  await db
    .insertInto("label_images")
    .values({
      id,
      disc_id: discId,
      side_id: v.sideId ?? null,
      kind: v.kind,
      object_key: key,
      file_name: v.fileName,
      declared_type: v.contentType,
      declared_bytes: v.bytes,
      uploaded_by: actor.id,
      expires_at: sql<Date>`now() + make_interval(secs => ${uploadLifetimeSeconds})`,
    })
    .execute();
  const url = await getSignedUrl(
    s3(),
    new PutObjectCommand({ Bucket: env().S3_BUCKET, Key: key, ContentType: v.contentType }),
    { expiresIn: uploadLifetimeSeconds },
  );
  return { labelImageId: id, url, headers: { "content-type": v.contentType } };
}

/** A check the file failed: the image is refused and what it stored deleted. */
class Refusal extends Error {}

/** Reads the stored object once into a private file, hashing it on the way: sharp then works from the file. */
async function fetchToFile(key: string, file: string): Promise<{ sha256: string; bytes: number }> {
  const hash = createHash("sha256");
  let bytes = 0;
  const body = await objectStream(key);
  body.on("data", (chunk: Buffer) => {
    hash.update(chunk);
    bytes += chunk.length;
  });
  await pipeline(body, createWriteStream(file, { mode: 0o600 }));
  return { sha256: hash.digest("hex"), bytes };
}

async function firstBytes(file: string, n = 16): Promise<Uint8Array> {
  const h = await fs.open(file, "r");
  try {
    const buf = Buffer.alloc(n);
    const { bytesRead } = await h.read(buf, 0, n, 0);
    return buf.subarray(0, bytesRead);
  } finally {
    await h.close();
  }
}

function storeUnavailable(what: string, err: unknown): AppError {
  const failure = storeFailure(err);
  console.error(
    `[rillbook] label image: the file store could not ${what}:`,
    err instanceof Error ? err.message : err,
  );
  return new AppError(
    "unavailable",
    503,
    `The lab's file store could not ${what} just now. Try again in a moment.`,
    undefined,
    { store: failure === "unreachable" ? "unreachable" : "failed" },
  );
}

/**
 * Completes a label image the signed-in person started: checks the size, the SHA-256 the
 * browser computed, and what the bytes are (a JPEG, PNG or TIFF, and the type it was sent
 * as), makes the thumbnail, and records the image and its event. A failed check refuses it:
 * its object (and thumbnail) are deleted and the answer says why.
 */
export async function completeLabelImage(actor: SessionUser, id: string, input: unknown) {
  const { sha256: claimed } = completeLabelImageSchema.parse(input);
  const row = await db.selectFrom("label_images").selectAll().where("id", "=", id).executeTakeFirst();
  if (!row || row.uploaded_by !== actor.id)
    throw new AppError("not_found", 404, "No such label image of yours. Add the image again.");
  if (row.state === "stored") throw new AppError("conflict", 409, "This label image is already stored.");
  if (row.state === "refused")
    throw new AppError(
      "conflict",
      409,
      `This label image was not accepted (${row.reason ?? "refused"}). Add it again.`,
    );
  if (new Date(row.expires_at).getTime() <= Date.now()) {
    await refuseImage(row.id, row.object_key, null, "the upload expired");
    throw new AppError("expired", 410, "This label image's upload expired. Add the image again.");
  }
  const dir = await fs.mkdtemp(path.join(os.tmpdir(), "rillbook-label-"));
  const file = path.join(dir, "image");
  const thumbKey = thumbnailKeyFor(row.disc_id, row.id);
  let thumbStored = false;
  try {
    let got: { sha256: string; bytes: number };
    try {
      got = await fetchToFile(row.object_key, file);
    } catch (err) {
      if (isObjectMissing(err)) throw new Refusal("The image never reached the file store. Add it again.");
      throw storeUnavailable("read the image", err);
    }
    if (got.bytes !== row.declared_bytes)
      throw new Refusal(
        `The stored image has ${got.bytes} bytes, not the ${row.declared_bytes} it was sent as. Nothing was kept: add it again.`,
      );
    if (got.sha256 !== claimed)
      throw new Refusal(
        `The stored image's SHA-256 (${got.sha256.slice(0, 12)}…) is not the one your browser computed (${claimed.slice(0, 12)}…). Nothing was kept: add it again.`,
      );
    const declared = labelImageTypes[row.declared_type as LabelImageType];
    const head = await firstBytes(file);
    const format = sniffImageFormat(head);
    if (!format)
      throw new Refusal(
        `“${row.file_name}” is not a JPEG, PNG or TIFF image: its first bytes are those of ${whatItLooksLike(head)}. ` +
          "Nothing was kept. Label images are photographs or scans saved as JPEG, PNG or TIFF.",
      );
    if (format !== declared)
      throw new Refusal(
        `“${row.file_name}” was sent as a ${formatWords[declared]} image (${row.declared_type}) but its bytes are a ${formatWords[format]} image. ` +
          `Nothing was kept: give the file its true type (a .${labelImageExtension[format]} name) and add it again.`,
      );
    let meta: Metadata;
    let thumbnail: Buffer;
    try {
      meta = await sharp(file).metadata();
      if (meta.format !== format && !(format === "jpeg" && meta.format === "jpeg"))
        throw new Error(`it reads as ${String(meta.format)}`);
      thumbnail = await sharp(file)
        .rotate()
        .resize({ width: thumbnailPx, height: thumbnailPx, fit: "inside", withoutEnlargement: true })
        .flatten({ background: "#ffffff" })
        .jpeg({ quality: 82 })
        .toBuffer();
    } catch (err) {
      throw new Refusal(
        `“${row.file_name}” starts like a ${formatWords[format]} image but cannot be read as one (${err instanceof Error ? err.message : String(err)}). Nothing was kept.`,
      );
    }
    try {
      await s3().send(
        new PutObjectCommand({
          Bucket: env().S3_BUCKET,
          Key: thumbKey,
          Body: thumbnail,
          ContentType: "image/jpeg",
        }),
      );
      thumbStored = true;
    } catch (err) {
      throw storeUnavailable("store the thumbnail", err);
    }
    return await db.transaction().execute(async (trx) => {
      const done = await trx
        .updateTable("label_images")
        .set({
          state: "stored",
          format,
          width: meta.width ?? null,
          height: meta.height ?? null,
          bytes: got.bytes,
          sha256: got.sha256,
          thumbnail_key: thumbKey,
          stored_at: sql<Date>`now()`,
        })
        .where("id", "=", row.id)
        .where("state", "=", "pending")
        .returning(["id", "stored_at"])
        .executeTakeFirst();
      if (!done) throw new AppError("conflict", 409, "This label image was completed by another request.");
      const side = row.side_id
        ? await trx.selectFrom("sides").select("designation").where("id", "=", row.side_id).executeTakeFirst()
        : undefined;
      await appendEvent(trx, {
        actorId: actor.id,
        kind: "disc.label_image_added",
        subjectType: "disc",
        subjectId: row.disc_id,
        discId: row.disc_id,
        payload: {
          labelImageId: row.id,
          kind: row.kind,
          ...(side ? { side: side.designation } : {}),
          objectKey: row.object_key,
          fileName: row.file_name,
          format,
          width: meta.width ?? null,
          height: meta.height ?? null,
          bytes: got.bytes,
          sha256: got.sha256,
        },
      });
      return {
        labelImageId: row.id,
        kind: row.kind,
        sideId: row.side_id,
        format,
        width: meta.width ?? null,
        height: meta.height ?? null,
        bytes: got.bytes,
        sha256: got.sha256,
      };
    });
  } catch (err) {
    if (err instanceof Refusal) {
      await refuseImage(row.id, row.object_key, thumbStored ? thumbKey : null, err.message);
      throw new AppError(
        "invalid",
        422,
        err.message,
        { file: [err.message] },
        { labelImageState: "refused" },
      );
    }
    throw err;
  } finally {
    await fs.rm(dir, { recursive: true, force: true });
  }
}

/** Marks the image refused (kept as a record of the attempt) and deletes what it stored: its own keys only. */
async function refuseImage(id: string, key: string, thumbKey: string | null, reason: string): Promise<void> {
  await db
    .updateTable("label_images")
    .set({ state: "refused", reason: reason.slice(0, 1000) })
    .where("id", "=", id)
    .where("state", "=", "pending")
    .execute();
  for (const k of [key, thumbKey])
    if (k) await deleteObject(k).catch((err) => console.error(`[rillbook] could not delete ${k}:`, err));
}

/** The disc's stored label images for its page, with their thumbnail and download URLs (the keys stay on the server). */
export async function listLabelImages(discId: string) {
  return (await storedLabelImages(discId)).map(({ objectKey: _key, ...r }) => ({
    ...r,
    thumbnailUrl: `/api/label-images/${r.id}/thumbnail`,
    downloadUrl: `/api/label-images/${r.id}/download`,
  }));
}

const contentTypes: Record<LabelImageFormat, string> = {
  jpeg: "image/jpeg",
  png: "image/png",
  tiff: "image/tiff",
};

/** A stored label image's thumbnail or original, read from the bucket for the browser. */
export async function labelImageFile(
  id: string,
  which: "thumbnail" | "original",
): Promise<{ body: Readable; contentType: string; fileName: string }> {
  const row = await db
    .selectFrom("label_images")
    .select(["object_key", "thumbnail_key", "format", "file_name"])
    .where("id", "=", id)
    .where("state", "=", "stored")
    .executeTakeFirst();
  if (!row) throw new AppError("not_found", 404, "No such label image.");
  const key = which === "thumbnail" ? row.thumbnail_key! : row.object_key;
  try {
    return {
      body: await objectStream(key),
      contentType: which === "thumbnail" ? "image/jpeg" : contentTypes[row.format!],
      fileName: row.file_name,
    };
  } catch (err) {
    if (isObjectMissing(err)) throw new AppError("not_found", 404, "The image is not in the file store.");
    throw storeUnavailable("read the image", err);
  }
}

/**
 * Withdraws a stored label image added by mistake, with the person's reason: it leaves the
 * disc's page, record and bags; its row, object and thumbnail stay, under fixity and backup,
 * and the event names the file and its SHA-256. Final: the database refuses any later change.
 */
export async function withdrawLabelImage(actor: SessionUser, id: string, input: unknown) {
  const { reason } = withdrawLabelImageSchema.parse(input);
  return db.transaction().execute(async (trx) => {
    const row = await trx
      .selectFrom("label_images as l")
      .leftJoin("sides as s", "s.id", "l.side_id")
      .select(["l.id", "l.state", "l.disc_id", "l.kind", "l.file_name", "l.sha256", "s.designation"])
      .where("l.id", "=", id)
      .forUpdate("l")
      .executeTakeFirst();
    if (!row || row.state === "pending" || row.state === "refused")
      throw new AppError("not_found", 404, "No such label image on record.");
    if (row.state === "withdrawn")
      throw new AppError("conflict", 409, "This label image is already withdrawn.");
    await trx
      .updateTable("label_images")
      .set({
        state: "withdrawn",
        withdrawn_at: sql<Date>`now()`,
        withdrawn_by: actor.id,
        withdrawn_reason: reason,
      })
      .where("id", "=", row.id)
      .execute();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "disc.label_image_withdrawn",
      subjectType: "disc",
      subjectId: row.disc_id,
      discId: row.disc_id,
      payload: {
        labelImageId: row.id,
        kind: row.kind,
        ...(row.designation ? { side: row.designation } : {}),
        fileName: row.file_name,
        sha256: row.sha256,
        reason,
      },
    });
    return { labelImageId: row.id, state: "withdrawn" as const };
  });
}
