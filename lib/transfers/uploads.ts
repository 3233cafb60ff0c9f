import "server-only";
import { randomUUID } from "node:crypto";
import {
  AbortMultipartUploadCommand,
  CompleteMultipartUploadCommand,
  CreateMultipartUploadCommand,
  HeadObjectCommand,
  ListPartsCommand,
  UploadPartCommand,
} from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { type Selectable, sql } from "kysely";
import { db } from "../../db";
import type { UploadsTable } from "../../db/types";
import { readWavHeader, WavError } from "../audio";
import type { SessionUser } from "../auth/session-user";
import { env } from "../env";
import { AppError, fromZod } from "../http/errors";
import { recordTransferEquipment } from "../equipment/transfer-equipment";
import { appendEvent } from "../provenance";
import { lockSide, transferAccepted } from "../sides/lifecycle";
import { storeFailure } from "../storage/errors";
import { deleteObject, hashObject, objectSource } from "../storage/objects";
import { s3 } from "../storage/s3";
import {
  completeUploadSchema,
  signPartsSchema,
  startUploadSchema,
  uploadableStatuses,
  uploadRefSchema,
} from "../validation/transfers";

type Upload = Selectable<UploadsTable>;

const urlLifetimeSeconds = 3600;
/** An upload can be resumed for a day; after that it is refused and what it stored is dropped. */
export const uploadLifetimeHours = 24;
/**
 * A completion holds its upload while the file is assembled and checked (a 64 GiB file
 * takes minutes to hash). One that has held it this long has died with its server, and
 * another completion may take over; the claim it held no longer lets it finish.
 */
const claimLeaseMinutes = 120;

/** 8 MiB parts, larger when needed to stay within S3's 10 000 parts. */
export function partSizeFor(bytes: number): number {
  const min = 8 * 1024 * 1024;
  return Math.max(min, Math.ceil(bytes / 10_000 / min) * min);
}

/**
 * The object key of an upload: made only of server-made ids, so nothing the client sends
 * can name another side's file (the database checks the same shape).
 */
function objectKeyFor(sideId: string, uploadId: string): string {
  return `transfers/${sideId}/${uploadId}/flat.wav`;
}

async function sideForUpload(actor: SessionUser, sideId: string) {
  const side = await db
    .selectFrom("sides")
    .select(["id", "disc_id", "designation", "status", "assigned_engineer_id"])
    .where("id", "=", sideId)
    .executeTakeFirst();
  if (!side) throw new AppError("not_found", 404, "No such side.");
  if (side.assigned_engineer_id !== actor.id)
    throw new AppError("forbidden", 403, "This side is not assigned to you.");
  if (!uploadableStatuses.has(side.status)) {
    throw new AppError("conflict", 409, `The side is ${side.status.replace("_", " ")}: no new transfer now.`);
  }
  return side;
}

/** The signed-in person's own upload, on a side still assigned to them and open to a transfer. */
async function ownUpload(actor: SessionUser, uploadId: string) {
  const upload = await db.selectFrom("uploads").selectAll().where("id", "=", uploadId).executeTakeFirst();
  // Someone else's upload is not told apart from one that does not exist.
  if (!upload || upload.started_by !== actor.id)
    throw new AppError("not_found", 404, "No such upload of yours. Start the upload again.");
  const side = await sideForUpload(actor, upload.side_id);
  return { upload, side };
}

const isExpired = (u: Upload) => new Date(u.expires_at).getTime() <= Date.now();

/** Why a finished (or expired) upload takes nothing more; `details.uploadState` tells the browser not to resume it. */
function closedError(u: Upload): AppError {
  const why = u.reason ? ` (${u.reason})` : "";
  const details = (uploadState: string) => ({ uploadState });
  switch (u.state) {
    case "completed":
      return new AppError(
        "conflict",
        409,
        "This upload is already complete and its transfer recorded: there is nothing more to send for it.",
        undefined,
        details("completed"),
      );
    case "completing":
      return new AppError(
        "conflict",
        409,
        "This upload is being completed by another request right now: wait for that answer.",
        undefined,
        details("completing"),
      );
    case "aborted":
      return new AppError(
        "conflict",
        409,
        `This upload was cancelled${why}. Start the upload again.`,
        undefined,
        details("aborted"),
      );
    case "refused":
      return new AppError(
        "conflict",
        409,
        `This upload was not accepted${why}. Start the upload again.`,
        undefined,
        details("refused"),
      );
    case "open":
      return new AppError(
        "expired",
        410,
        `This upload expired (uploads can be resumed for ${uploadLifetimeHours} hours). Start the upload again.`,
        undefined,
        details("expired"),
      );
  }
}

/**
 * The store could not do what was asked just now: a 503 the browser's upload waits out
 * and tries again (`details.store` tells it that it is the file store that is away, not
 * the database). Logged in a line, without the socket error's stack.
 */
function storageUnavailable(what: string, err: unknown): AppError {
  const failure = storeFailure(err);
  const cause = err instanceof Error ? err.message : String(err);
  console.error(`[rillbook] the file store could not ${what} (${failure ?? "failed"}): ${cause}`);
  return new AppError(
    "unavailable",
    503,
    failure === "unreachable"
      ? `The lab's file store cannot be reached just now, so it could not ${what}. Nothing stored is lost: try again in a moment.`
      : `The lab's file store could not ${what} just now. Try again in a moment.`,
    undefined,
    { store: failure === "unreachable" ? "unreachable" : "failed" },
  );
}

/** The HTTP status and error code of a refusal from the storage, when it gave one. */
function storageAnswer(err: unknown): { status?: number; code?: string } {
  const e = err as { name?: string; Code?: string; $metadata?: { httpStatusCode?: number } } | null;
  return { status: e?.$metadata?.httpStatusCode, code: e?.Code ?? e?.name };
}

async function objectExists(key: string): Promise<boolean> {
  try {
    await s3().send(new HeadObjectCommand({ Bucket: env().S3_BUCKET, Key: key }));
    return true;
  } catch (err) {
    if (storageAnswer(err).status === 404) return false;
    throw storageUnavailable("look at the uploaded file", err);
  }
}

/** Drops whatever this upload stored: its unassembled parts and its assembled object. Only ever its own key. */
async function dropStored(u: Upload): Promise<void> {
  await s3()
    .send(
      new AbortMultipartUploadCommand({
        Bucket: env().S3_BUCKET,
        Key: u.object_key,
        UploadId: u.storage_upload_id,
      }),
    )
    .catch(() => undefined); // already assembled or already gone; a bucket lifecycle rule sweeps what remains.
  await deleteObject(u.object_key).catch((err) =>
    console.error(`[rillbook] could not delete ${u.object_key}:`, err),
  );
}

/** An open upload past its time: marked aborted and its parts dropped, once. */
async function expire(u: Upload): Promise<void> {
  const done = await db
    .updateTable("uploads")
    .set({ state: "aborted", reason: "expired", finished_at: sql`now()`, updated_at: sql`now()` })
    .where("id", "=", u.id)
    .where("state", "=", "open")
    .where("expires_at", "<=", sql<Date>`now()`)
    .executeTakeFirst();
  if (Number(done.numUpdatedRows) > 0) await dropStored(u);
}

/** The upload must be open and within its time to take more parts or a completion. */
async function requireOpen(u: Upload): Promise<void> {
  if (u.state !== "open") throw closedError(u);
  if (isExpired(u)) {
    await expire(u);
    throw closedError(u);
  }
}

async function signParts(u: Upload, partNumbers: number[]) {
  const beyond = partNumbers.filter((n) => n > u.part_count);
  if (beyond.length) {
    const message =
      `This upload was started for ${u.declared_bytes} bytes: ${u.part_count === 1 ? "one part" : `${u.part_count} parts`} ` +
      `of up to ${u.part_size} bytes. There is no part ${beyond[0]}.`;
    throw new AppError("invalid", 422, message, { partNumbers: [message] });
  }
  const expiresIn = Math.max(
    1,
    Math.min(urlLifetimeSeconds, Math.floor((new Date(u.expires_at).getTime() - Date.now()) / 1000)),
  );
  return Promise.all(
    [...new Set(partNumbers)].map(async (partNumber) => ({
      partNumber,
      url: await getSignedUrl(
        s3(),
        new UploadPartCommand({
          Bucket: env().S3_BUCKET,
          Key: u.object_key,
          UploadId: u.storage_upload_id,
          PartNumber: partNumber,
        }),
        { expiresIn },
      ),
    })),
  );
}

/**
 * Starts an upload: the server makes its id and key, asks the storage for a multipart
 * upload, and remembers both with the declared size. The client gets the upload's id
 * (the only name it uses from now on), the part size and the first part URLs.
 */
export async function startUpload(actor: SessionUser, input: unknown) {
  const parsed = startUploadSchema.safeParse(input);
  // One thing wrong (an empty file, say) is said as the answer's message, where the bench shows it.
  if (!parsed.success)
    throw fromZod(
      parsed.error,
      parsed.error.issues.length === 1 ? parsed.error.issues[0].message : undefined,
    );
  const { sideId, fileName, bytes } = parsed.data;
  await sideForUpload(actor, sideId);
  const id = randomUUID();
  const key = objectKeyFor(sideId, id);
  const partSize = partSizeFor(bytes);
  const partCount = Math.ceil(bytes / partSize);
  let storageUploadId: string;
  try {
    const created = await s3().send(
      new CreateMultipartUploadCommand({ Bucket: env().S3_BUCKET, Key: key, ContentType: "audio/wav" }),
    );
    if (!created.UploadId) throw new Error("the storage gave no upload id");
    storageUploadId = created.UploadId;
  } catch (err) {
    throw storageUnavailable("start the upload", err);
  }
  const values = {
    id,
    side_id: sideId,
    started_by: actor.id,
    object_key: key,
    storage_upload_id: storageUploadId,
    file_name: fileName,
    declared_bytes: bytes,
    part_size: partSize,
    part_count: partCount,
  };
  let upload: Upload;
  try {
    upload = await db
      .insertInto("uploads")
      .values({ ...values, expires_at: sql<Date>`now() + make_interval(hours => ${uploadLifetimeHours})` })
      .returningAll()
      .executeTakeFirstOrThrow();
  } catch (err) {
    await s3()
      .send(new AbortMultipartUploadCommand({ Bucket: env().S3_BUCKET, Key: key, UploadId: storageUploadId }))
      .catch(() => undefined);
    throw err;
  }
  const first = Array.from({ length: Math.min(partCount, 100) }, (_, i) => i + 1);
  return {
    uploadId: id,
    partSize,
    partCount,
    expiresAt: upload.expires_at,
    urls: await signParts(upload, first),
  };
}

/** Fresh URLs for given parts (more parts, or a retry after a failure), never beyond the declared size. */
export async function signUploadParts(actor: SessionUser, input: unknown) {
  const { uploadId, partNumbers } = signPartsSchema.parse(input);
  const { upload } = await ownUpload(actor, uploadId);
  await requireOpen(upload);
  return { urls: await signParts(upload, partNumbers) };
}

/**
 * The parts already stored, to resume after a failure; `parts: null` when the store
 * cannot list them (the local stand-in): the browser then goes by the parts it remembers
 * sending, and the completion checks the assembled file's size and SHA-256 all the same.
 */
export async function listUploadedParts(
  actor: SessionUser,
  input: unknown,
): Promise<{ parts: StoredPart[] | null }> {
  const { uploadId } = uploadRefSchema.parse(input);
  const { upload } = await ownUpload(actor, uploadId);
  await requireOpen(upload);
  try {
    return { parts: await storedParts(upload) };
  } catch (err) {
    const { status } = storageAnswer(err);
    if (status === 405 || status === 501) return { parts: null };
    throw storageUnavailable("list the parts already stored", err);
  }
}

type StoredPart = { partNumber: number; etag: string; size: number };

async function storedParts(u: Upload): Promise<StoredPart[]> {
  const parts: StoredPart[] = [];
  let marker: string | undefined;
  do {
    const res = await s3().send(
      new ListPartsCommand({
        Bucket: env().S3_BUCKET,
        Key: u.object_key,
        UploadId: u.storage_upload_id,
        PartNumberMarker: marker,
      }),
    );
    for (const p of res.Parts ?? [])
      parts.push({ partNumber: p.PartNumber!, etag: p.ETag!, size: Number(p.Size ?? 0) });
    marker = res.IsTruncated ? res.NextPartNumberMarker : undefined;
  } while (marker);
  return parts;
}

/** The size part `n` must have: the part size, the rest of the declared bytes for the last. */
const expectedPartSize = (u: Upload, n: number) =>
  n < u.part_count ? u.part_size : u.declared_bytes - (u.part_count - 1) * u.part_size;
const bareEtag = (etag: string) => etag.replace(/"/g, "");

/**
 * Before asking the storage to assemble anything: every part the client names is stored,
 * is the one it sent (same ETag), and has the size the declared size gives it. A storage
 * that cannot list parts (the local stand-in) is checked after assembly instead.
 */
async function checkStoredParts(u: Upload, parts: { partNumber: number; etag: string }[]): Promise<void> {
  let stored: StoredPart[];
  try {
    stored = await storedParts(u);
  } catch (err) {
    const { status } = storageAnswer(err);
    if (status === 405 || status === 501) return;
    // An earlier completion of this upload assembled the parts and then gave the upload
    // back (the engineer was asked to confirm a duplicate): its own object is the file.
    if (status === 404 && (await objectExists(u.object_key))) return;
    if (status === 404)
      throw refusal(
        "The storage no longer holds this upload's parts. Upload the file again.",
        undefined,
        409,
      );
    throw storageUnavailable("list the uploaded parts", err);
  }
  const byNumber = new Map(stored.map((p) => [p.partNumber, p]));
  for (const { partNumber, etag } of parts) {
    const p = byNumber.get(partNumber);
    if (!p)
      throw refusal(`Part ${partNumber} never reached the storage. Upload the file again.`, {
        parts: [`Part ${partNumber} is missing.`],
      });
    if (bareEtag(p.etag) !== bareEtag(etag))
      throw refusal(
        `Part ${partNumber} in the storage is not the one your browser sent. Upload the file again.`,
        { parts: [`Part ${partNumber} differs.`] },
      );
    const want = expectedPartSize(u, partNumber);
    if (p.size !== want)
      throw refusal(
        `Part ${partNumber} has ${p.size} bytes, but an upload started for ${u.declared_bytes} bytes needs ${want} there. Upload the file again.`,
        { parts: [`Part ${partNumber} has the wrong size.`] },
      );
  }
}

/** Cancels an open upload and drops what it stored. Cancelling one already cancelled answers the same. */
export async function abortUpload(actor: SessionUser, input: unknown) {
  const { uploadId } = uploadRefSchema.parse(input);
  const { upload } = await ownUpload(actor, uploadId);
  if (upload.state === "aborted") return { aborted: true };
  const done = await db
    .updateTable("uploads")
    .set({ state: "aborted", reason: "cancelled", finished_at: sql`now()`, updated_at: sql`now()` })
    .where("id", "=", upload.id)
    .where("state", "=", "open")
    .executeTakeFirst();
  if (Number(done.numUpdatedRows) === 0) {
    const now = await db
      .selectFrom("uploads")
      .selectAll()
      .where("id", "=", upload.id)
      .executeTakeFirstOrThrow();
    if (now.state === "aborted") return { aborted: true };
    throw closedError(now);
  }
  await dropStored(upload);
  return { aborted: true };
}

/** A check the file failed: the upload is refused and what it stored is deleted. */
class Refusal extends Error {
  constructor(readonly error: AppError) {
    super(error.message);
  }
}

const refusal = (message: string, fields?: Record<string, string[]>, status = 422) =>
  new Refusal(new AppError("invalid", status, message, fields, { uploadState: "refused" }));

/**
 * Takes the upload for one completion. A conditional update, so of two completions sent
 * at once exactly one proceeds; the other is told why not.
 */
async function claimForCompletion(u: Upload): Promise<string> {
  const claim = randomUUID();
  const taken = await db
    .updateTable("uploads")
    .set({ state: "completing", claim, claimed_at: sql`now()`, updated_at: sql`now()` })
    .where("id", "=", u.id)
    .where("expires_at", ">", sql<Date>`now()`)
    .where((eb) =>
      eb.or([
        eb("state", "=", "open"),
        eb.and([
          eb("state", "=", "completing"),
          eb("claimed_at", "<", sql<Date>`now() - make_interval(mins => ${claimLeaseMinutes})`),
        ]),
      ]),
    )
    .executeTakeFirst();
  if (Number(taken.numUpdatedRows) === 1) return claim;
  const now = await db.selectFrom("uploads").selectAll().where("id", "=", u.id).executeTakeFirstOrThrow();
  if (now.state === "open" && isExpired(now)) await expire(now);
  throw closedError(now);
}

/** Gives the upload back as open (a passing failure: the storage did not answer), if this completion still holds it. */
async function release(u: Upload, claim: string): Promise<void> {
  await db
    .updateTable("uploads")
    .set({ state: "open", claim: null, claimed_at: null, updated_at: sql`now()` })
    .where("id", "=", u.id)
    .where("claim", "=", claim)
    .execute();
}

/** Refuses the upload and deletes what it stored, if this completion still holds it: never anything but its own object. */
async function refuse(u: Upload, claim: string, reason: string): Promise<void> {
  const done = await db
    .updateTable("uploads")
    .set({
      state: "refused",
      reason: reason.slice(0, 1000),
      claim: null,
      claimed_at: null,
      finished_at: sql`now()`,
      updated_at: sql`now()`,
    })
    .where("id", "=", u.id)
    .where("claim", "=", claim)
    .executeTakeFirst();
  if (Number(done.numUpdatedRows) > 0) await dropStored(u);
}

/** Asks the storage to assemble the parts into the upload's own object. */
async function assemble(u: Upload, parts: { partNumber: number; etag: string }[]): Promise<void> {
  try {
    await s3().send(
      new CompleteMultipartUploadCommand({
        Bucket: env().S3_BUCKET,
        Key: u.object_key,
        UploadId: u.storage_upload_id,
        MultipartUpload: { Parts: parts.map((p) => ({ PartNumber: p.partNumber, ETag: p.etag })) },
      }),
    );
  } catch (err) {
    // A completion that died after the storage assembled the file left it in place; this key is this upload's alone.
    if (await objectExists(u.object_key)) return;
    const { status, code } = storageAnswer(err);
    if (status === 404)
      throw refusal(
        "The storage no longer holds this upload's parts. Upload the file again.",
        undefined,
        409,
      );
    if (status !== undefined && status >= 400 && status < 500)
      throw refusal(
        `The storage refused to put the parts together (${code ?? status}). Upload the file again.`,
      );
    throw storageUnavailable("put the uploaded parts together", err);
  }
}

/**
 * Completes an upload the signed-in person started, then checks what arrived before
 * accepting it: the size declared at the start, the SHA-256 (recomputed by streaming the
 * stored object), and the WAV/BWF/RF64 header. A failed check refuses the upload and
 * deletes its own object; success records the transfer and its event and moves the side
 * to "transferred", in one transaction.
 */
interface SameFile {
  transferId: string;
  sideId: string;
  designation: string;
  shelfMark: string;
  fileName: string;
  uploadedBy: string | null;
  createdAt: Date;
}

/** Flat transfers of other sides whose SHA-256 is this one: the same file, perhaps the wrong disc's. */
async function sidesWithSameFile(sideId: string, sha256: string): Promise<SameFile[]> {
  return db
    .selectFrom("transfers as t")
    .innerJoin("sides as s", "s.id", "t.side_id")
    .innerJoin("discs as d", "d.id", "s.disc_id")
    .leftJoin("users as u", "u.id", "t.uploaded_by")
    .select([
      "t.id as transferId",
      "s.id as sideId",
      "s.designation",
      "d.shelf_mark as shelfMark",
      "t.file_name as fileName",
      "u.name as uploadedBy",
      "t.created_at as createdAt",
    ])
    .where("t.sha256", "=", sha256)
    .where("t.side_id", "<>", sideId)
    .orderBy("t.created_at")
    .limit(5)
    .execute();
}

function duplicateFile(twins: SameFile[]): AppError {
  const [first] = twins;
  const day = first.createdAt.toISOString().slice(0, 10);
  const more =
    twins.length > 1 ? ` (and ${twins.length - 1} other side${twins.length === 2 ? "" : "s"})` : "";
  return new AppError(
    "duplicate_file",
    409,
    `This file is identical (same SHA-256) to the flat transfer of ${first.shelfMark} side ${first.designation}${more}, ` +
      `uploaded as “${first.fileName}”${first.uploadedBy ? ` by ${first.uploadedBy}` : ""} on ${day}. ` +
      `Two sides rarely give the same file: check that this is the right disc and side. Accept it only if it is.`,
    { sameFileAs: twins.map((t) => `${t.shelfMark} side ${t.designation}`) },
  );
}

export async function completeUpload(actor: SessionUser, input: unknown) {
  const c = completeUploadSchema.parse(input);
  const { upload, side } = await ownUpload(actor, c.uploadId);
  if (upload.state !== "open" && upload.state !== "completing") throw closedError(upload);
  const claim = await claimForCompletion(upload);
  try {
    const declared = upload.declared_bytes;
    if (c.bytes !== declared)
      throw refusal(
        `The file has ${c.bytes} bytes, but this upload was started for ${declared}. Upload the file again.`,
        { bytes: ["Not the size the upload was started for."] },
      );
    const parts = [...c.parts].sort((a, b) => a.partNumber - b.partNumber);
    if (parts.length !== upload.part_count || parts.some((p, i) => p.partNumber !== i + 1)) {
      const expected = upload.part_count === 1 ? "part 1" : `parts 1 to ${upload.part_count}`;
      throw refusal(
        `An upload of ${declared} bytes is made of ${expected}, each once. Upload the file again.`,
        { parts: [`Send ${expected}.`] },
      );
    }
    await checkStoredParts(upload, parts);
    await assemble(upload, parts);
    const stored = await objectSource(upload.object_key).catch((err) => {
      throw storageUnavailable("read the uploaded file", err);
    });
    if (stored.size !== declared)
      throw refusal(
        `The stored file has ${stored.size} bytes, not the ${declared} this upload was started for. Upload the file again.`,
      );
    const { sha256, bytes } = await hashObject(upload.object_key).catch((err) => {
      throw storageUnavailable("read the uploaded file", err);
    });
    if (bytes !== declared)
      throw refusal(
        `The stored file has ${bytes} bytes, not the ${declared} this upload was started for. Upload the file again.`,
      );
    if (sha256 !== c.sha256)
      throw refusal(
        `The stored file's SHA-256 (${sha256.slice(0, 12)}…) does not match the one your browser computed (${c.sha256.slice(0, 12)}…). Upload it again.`,
      );
    let header;
    try {
      header = await readWavHeader(stored);
    } catch (err) {
      if (err instanceof WavError) throw refusal(`Not accepted: ${err.message}`, { file: [err.message] });
      throw storageUnavailable("read the uploaded file's header", err);
    }
    // The same file as another side's transfer (by the checksum worked out here): the
    // upload goes back to open, not refused, so the engineer can confirm it or cancel it.
    const twins = await sidesWithSameFile(side.id, sha256);
    if (twins.length && !c.confirmDuplicate) throw duplicateFile(twins);
    return await db.transaction().execute(async (trx) => {
      const held = await trx
        .selectFrom("uploads")
        .select(["state", "claim"])
        .where("id", "=", upload.id)
        .forUpdate()
        .executeTakeFirstOrThrow();
      if (held.state !== "completing" || held.claim !== claim)
        throw new AppError(
          "conflict",
          409,
          "This upload was taken over by another completion: wait for that answer.",
        );
      const locked = await lockSide(trx, side.id);
      const row = await trx
        .insertInto("transfers")
        .values({
          side_id: side.id,
          upload_id: upload.id,
          object_key: upload.object_key,
          file_name: upload.file_name,
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
        .returning(["id", sql<string>`to_char(created_at AT TIME ZONE 'UTC', 'YYYY-MM-DD')`.as("day")])
        .executeTakeFirstOrThrow();
      // The register's chain (and the one item swapped in): the items this transfer was made with, kept as they stand today.
      const equipment = await recordTransferEquipment(trx, {
        transferId: row.id,
        chainId: c.chainId,
        swapItemId: c.swapItemId,
        day: row.day,
      });
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
        payload: {
          side: side.designation,
          transferId: row.id,
          uploadId: upload.id,
          objectKey: upload.object_key,
          fileName: upload.file_name,
          bytes,
          sha256,
          technical,
          bext: header.bext ?? null,
          stylusSize: c.stylusSize,
          stylusShape: c.stylusShape,
          measuredSpeedRpm: c.measuredSpeedRpm ?? null,
          chain: c.chain,
          ...(equipment
            ? {
                equipment: {
                  chain: equipment.chain,
                  items: equipment.items.map((i) => ({
                    id: i.itemId,
                    kind: i.kind,
                    make: i.make,
                    model: i.model,
                    serial: i.serial,
                    stylusTipUm: i.stylusTipUm,
                    stylusShape: i.stylusShape,
                    swapped: i.swapped,
                  })),
                },
              }
            : {}),
          ...(twins.length
            ? {
                sameFileAs: twins.map((t) => ({
                  sideId: t.sideId,
                  shelfMark: t.shelfMark,
                  side: t.designation,
                  transferId: t.transferId,
                })),
              }
            : {}),
        },
      });
      // The new transfer is the side's current one; what was rendered from the old one is superseded.
      await transferAccepted(trx, actor, locked, row.id);
      await trx
        .updateTable("uploads")
        .set({
          state: "completed",
          claim: null,
          claimed_at: null,
          finished_at: sql`now()`,
          updated_at: sql`now()`,
        })
        .where("id", "=", upload.id)
        .execute();
      return { transferId: row.id, sha256, bytes, technical };
    });
  } catch (err) {
    if (err instanceof Refusal) {
      // Nothing half-registered: a refused upload's own object goes, and nothing else.
      await refuse(upload, claim, err.error.message);
      throw err.error;
    }
    // A passing failure (the storage, the database): the upload stays open for another try.
    await release(upload, claim);
    throw err;
  }
}
