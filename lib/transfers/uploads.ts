import "server-only";
import { randomUUID } from "node:crypto";
import {
  AbortMultipartUploadCommand,
  CompleteMultipartUploadCommand,
  CreateMultipartUploadCommand,
  ListPartsCommand,
  UploadPartCommand,
} from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { db } from "../../db";
import { readWavHeader, WavError } from "../audio";
import type { SessionUser } from "../auth/session-user";
import { env } from "../env";
import { AppError } from "../http/errors";
import { appendEvent } from "../provenance";
import { lockSide, transferAccepted } from "../sides/lifecycle";
import { deleteObject, hashObject, objectSource } from "../storage/objects";
import { s3 } from "../storage/s3";
import { completeUploadSchema, signPartsSchema, startUploadSchema, uploadableStatuses, uploadRefSchema } from "../validation/transfers";

const urlLifetimeSeconds = 3600;

/** 8 MiB parts, larger when needed to stay within S3's 10 000 parts. */
export function partSizeFor(bytes: number): number {
  const min = 8 * 1024 * 1024;
  return Math.max(min, Math.ceil(bytes / 10_000 / min) * min);
}

function safeName(name: string): string {
  return name.replace(/[^A-Za-z0-9._-]+/g, "_").slice(0, 120) || "transfer.wav";
}

async function sideForUpload(actor: SessionUser, sideId: string) {
  const side = await db.selectFrom("sides").select(["id", "disc_id", "designation", "status", "assigned_engineer_id"]).where("id", "=", sideId).executeTakeFirst();
  if (!side) throw new AppError("not_found", 404, "No such side.");
  if (side.assigned_engineer_id !== actor.id) throw new AppError("forbidden", 403, "This side is not assigned to you.");
  if (!uploadableStatuses.has(side.status)) {
    throw new AppError("conflict", 409, `The side is ${side.status.replace("_", " ")}: no new transfer now.`);
  }
  return side;
}

/** The key names the side, so completing an upload can check the side again. */
function sideIdOfKey(key: string): string {
  const m = /^transfers\/([0-9a-f-]{36})\/[0-9a-f-]{36}\//.exec(key);
  if (!m) throw new AppError("invalid", 422, "That upload key is not one Rillbook made.", { key: ["Unknown upload."] });
  return m[1];
}

async function signParts(key: string, uploadId: string, partNumbers: number[]) {
  return Promise.all(
    partNumbers.map(async (partNumber) => ({
      partNumber,
      url: await getSignedUrl(s3(), new UploadPartCommand({ Bucket: env().S3_BUCKET, Key: key, UploadId: uploadId, PartNumber: partNumber }), { expiresIn: urlLifetimeSeconds }),
    })),
  );
}

export async function startUpload(actor: SessionUser, input: unknown) {
  const { sideId, fileName, bytes } = startUploadSchema.parse(input);
  await sideForUpload(actor, sideId);
  const key = `transfers/${sideId}/${randomUUID()}/${safeName(fileName)}`;
  const created = await s3().send(new CreateMultipartUploadCommand({ Bucket: env().S3_BUCKET, Key: key, ContentType: "audio/wav" }));
  const partSize = partSizeFor(bytes);
  const partCount = Math.ceil(bytes / partSize);
  const first = Array.from({ length: Math.min(partCount, 100) }, (_, i) => i + 1);
  return { key, uploadId: created.UploadId!, partSize, partCount, urls: await signParts(key, created.UploadId!, first) };
}

/** Fresh URLs for given parts (more parts, or a retry after a failure), and the parts already stored. */
export async function signUploadParts(actor: SessionUser, input: unknown) {
  const { key, uploadId, partNumbers } = signPartsSchema.parse(input);
  await sideForUpload(actor, sideIdOfKey(key));
  return { urls: await signParts(key, uploadId, partNumbers) };
}

export async function listUploadedParts(actor: SessionUser, input: unknown) {
  const { key, uploadId } = uploadRefSchema.parse(input);
  await sideForUpload(actor, sideIdOfKey(key));
  const parts: { partNumber: number; etag: string; size: number }[] = [];
  let marker: string | undefined;
  do {
    const res = await s3().send(new ListPartsCommand({ Bucket: env().S3_BUCKET, Key: key, UploadId: uploadId, PartNumberMarker: marker }));
    for (const p of res.Parts ?? []) parts.push({ partNumber: p.PartNumber!, etag: p.ETag!, size: Number(p.Size ?? 0) });
    marker = res.IsTruncated ? res.NextPartNumberMarker : undefined;
  } while (marker);
  return { parts };
}

export async function abortUpload(actor: SessionUser, input: unknown) {
  const { key, uploadId } = uploadRefSchema.parse(input);
  await sideForUpload(actor, sideIdOfKey(key));
  await s3().send(new AbortMultipartUploadCommand({ Bucket: env().S3_BUCKET, Key: key, UploadId: uploadId }));
  return { aborted: true };
}

/**
 * Completes the upload, then checks what arrived before accepting it: the size, the
 * SHA-256 (recomputed by streaming the stored object), and the WAV/BWF/RF64 header. Any
 * failure deletes the object and writes nothing; success records the transfer and its
 * event and moves the side to "transferred", in one transaction.
 */
export async function completeUpload(actor: SessionUser, input: unknown) {
  const c = completeUploadSchema.parse(input);
  const side = await sideForUpload(actor, sideIdOfKey(c.key));
  await s3().send(
    new CompleteMultipartUploadCommand({
      Bucket: env().S3_BUCKET,
      Key: c.key,
      UploadId: c.uploadId,
      MultipartUpload: { Parts: [...c.parts].sort((a, b) => a.partNumber - b.partNumber).map((p) => ({ PartNumber: p.partNumber, ETag: p.etag })) },
    }),
  );
  try {
    const { sha256, bytes } = await hashObject(c.key);
    if (bytes !== c.bytes) throw new AppError("invalid", 422, `The stored file has ${bytes} bytes, not the ${c.bytes} that were sent: the upload is incomplete. Upload it again.`);
    if (sha256 !== c.sha256) throw new AppError("invalid", 422, `The stored file's SHA-256 (${sha256.slice(0, 12)}…) does not match the one your browser computed (${c.sha256.slice(0, 12)}…). Upload it again.`);
    let header;
    try {
      header = await readWavHeader(await objectSource(c.key));
    } catch (err) {
      if (err instanceof WavError) throw new AppError("invalid", 422, `Not accepted: ${err.message}`, { file: [err.message] });
      throw err;
    }
    return await db.transaction().execute(async (trx) => {
      const locked = await lockSide(trx, side.id);
      const fileName = c.key.split("/").pop()!;
      const row = await trx
        .insertInto("transfers")
        .values({
          side_id: side.id,
          object_key: c.key,
          file_name: fileName,
          sha256,
          bytes,
          container: header.container,
          encoding: header.format,
          bits_per_sample: header.bitsPerSample,
          channels: header.channels,
          sample_rate_hz: header.sampleRateHz,
          frames: header.frames,
          duration_seconds: header.durationSeconds,
          bext: header.bext ? JSON.stringify(header.bext) : null,
          stylus_size: c.stylusSize,
          stylus_shape: c.stylusShape,
          measured_speed_rpm: c.measuredSpeedRpm ?? null,
          chain: c.chain,
          uploaded_by: actor.id,
        })
        .returning("id")
        .executeTakeFirstOrThrow();
      const technical = {
        container: header.container,
        encoding: header.format,
        bitsPerSample: header.bitsPerSample,
        channels: header.channels,
        sampleRateHz: header.sampleRateHz,
        frames: header.frames,
        durationSeconds: header.durationSeconds,
      };
      await appendEvent(trx, {
        actorId: actor.id,
        kind: "side.transfer_accepted",
        subjectType: "side",
        subjectId: side.id,
        discId: side.disc_id,
        payload: { side: side.designation, transferId: row.id, objectKey: c.key, bytes, sha256, technical, bext: header.bext ?? null, stylusSize: c.stylusSize, stylusShape: c.stylusShape, measuredSpeedRpm: c.measuredSpeedRpm ?? null, chain: c.chain },
      });
      // The new transfer is the side's current one; what was rendered from the old one is superseded.
      await transferAccepted(trx, actor, locked, row.id);
      return { transferId: row.id, sha256, bytes, technical };
    });
  } catch (err) {
    // Nothing half-registered: the object goes when the transfer is not accepted.
    await deleteObject(c.key).catch(() => undefined);
    throw err;
  }
}
