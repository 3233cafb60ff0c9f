// Fixity: re-reading stored objects (flat transfers, access copies, label images), recomputing
// their SHA-256 and recording each result as an event. Used by the worker's scheduled
// sweep and by a curator's "check this disc now". No framework imports.
import { type Kysely, sql } from "kysely";
import type { Database, FixityOutcome } from "../../db/types";
import { env } from "../env";
import { enqueueMail } from "../mail/outbox";
import { appendEvent } from "../provenance";
import { StoreUnreachableError, storeFailure } from "../storage/errors";
import { hashObject } from "../storage/objects";
import { objectKindWords, type StoredObjectKind } from "./object-words";

export { objectKindWords, type StoredObjectKind };

export interface StoredObject {
  kind: StoredObjectKind;
  id: string;
  key: string;
  sha256: string;
  /** The side it belongs to; null for a label image of the sleeve, which is the disc's. */
  sideId: string | null;
  discId: string;
  storedAt: Date;
}

/** Every stored object of the lab (or of one disc), with the checksum recorded when it was stored. */
export async function storedObjects(
  db: Kysely<Database>,
  only: { discId?: string; one?: { kind: StoredObjectKind; id: string } } = {},
): Promise<StoredObject[]> {
  const { discId, one } = only;
  let transfers = db
    .selectFrom("transfers as t")
    .innerJoin("sides as s", "s.id", "t.side_id")
    .select([
      "t.id",
      "t.object_key as key",
      "t.sha256",
      "t.side_id as sideId",
      "s.disc_id as discId",
      "t.created_at as storedAt",
    ]);
  let renders = db
    .selectFrom("renders as r")
    .innerJoin("sides as s", "s.id", "r.side_id")
    .select([
      "r.id",
      "r.object_key as key",
      "r.sha256",
      "r.side_id as sideId",
      "s.disc_id as discId",
      "r.finished_at as storedAt",
    ])
    .where("r.status", "=", "done");
  let labels = db
    .selectFrom("label_images as l")
    .select([
      "l.id",
      "l.object_key as key",
      "l.sha256",
      "l.side_id as sideId",
      "l.disc_id as discId",
      "l.stored_at as storedAt",
    ])
    // A withdrawn image left the disc's page, but its object is still the lab's to keep whole.
    .where("l.state", "in", ["stored", "withdrawn"]);
  if (discId) {
    transfers = transfers.where("s.disc_id", "=", discId);
    renders = renders.where("s.disc_id", "=", discId);
    labels = labels.where("l.disc_id", "=", discId);
  }
  if (one) {
    transfers = transfers.where("t.id", "=", one.id);
    renders = renders.where("r.id", "=", one.id);
    labels = labels.where("l.id", "=", one.id);
  }
  const [t, r, l] = await Promise.all([
    !one || one.kind === "transfer" ? transfers.execute() : [],
    !one || one.kind === "render" ? renders.execute() : [],
    !one || one.kind === "label_image" ? labels.execute() : [],
  ]);
  return [
    ...t.map((x) => ({ kind: "transfer" as const, ...x })),
    ...r.map((x) => ({
      kind: "render" as const,
      id: x.id,
      key: x.key!,
      sha256: x.sha256!,
      sideId: x.sideId,
      discId: x.discId,
      storedAt: x.storedAt ?? new Date(0),
    })),
    ...l.map((x) => ({
      kind: "label_image" as const,
      id: x.id,
      key: x.key,
      sha256: x.sha256!,
      sideId: x.sideId,
      discId: x.discId,
      storedAt: x.storedAt ?? new Date(0),
    })),
  ];
}

/** Objects whose last check is older than the cycle (or that were never checked). */
export async function dueObjects(db: Kysely<Database>, cycleDays: number): Promise<StoredObject[]> {
  const all = await storedObjects(db);
  if (!all.length) return [];
  const last = await db
    .selectFrom("fixity_checks")
    .select(["object_kind", "object_id", sql<Date>`max(checked_at)`.as("at")])
    .groupBy(["object_kind", "object_id"])
    .execute();
  const lastAt = new Map(last.map((l) => [`${l.object_kind}:${l.object_id}`, l.at]));
  const cutoff = Date.now() - cycleDays * 86_400_000;
  return all.filter((o) => {
    const at = lastAt.get(`${o.kind}:${o.id}`);
    return !at || at.getTime() < cutoff;
  });
}

export async function fixityCycleDays(db: Kysely<Database>): Promise<number> {
  const row = await db
    .selectFrom("lab_settings")
    .select("value")
    .where("key", "=", "fixity_cycle_days")
    .executeTakeFirst();
  const n = Number(row?.value ?? 30);
  return Number.isFinite(n) && n > 0 ? n : 30;
}

/** One stored object by kind and id (a check reads only its own row, not the lab's list). */
async function findObject(
  db: Kysely<Database>,
  kind: StoredObjectKind,
  id: string,
): Promise<StoredObject | null> {
  const [found] = await storedObjects(db, { one: { kind, id } });
  return found ?? null;
}

/**
 * Re-reads one object (streaming, bounded memory), compares its SHA-256 with the one
 * recorded when it was stored, and records the result and its event together. A
 * failure (mismatch, missing, or a refusal from the store) also mails every active
 * curator through the outbox. A store that cannot be reached is no result at all: it
 * throws StoreUnreachableError, records nothing, and the queue tries the check again.
 * `worker` names the worker process that read it, recorded with the result.
 */
/** What a fixity job carries: the object and, for a sweep's job, when the sweep found it due. */
export interface FixityJob {
  kind: StoredObjectKind;
  id: string;
  /** The database's time when the hourly sweep found the object due (an ISO string). */
  dueSince?: string;
}

/**
 * Runs one fixity job. A sweep's job whose object was checked after the sweep found it due
 * (a curator's "check this disc now" queued and done meanwhile) is not read again: a check
 * already stands for that moment, and a second would only repeat it.
 */
export async function runFixityJob(
  db: Kysely<Database>,
  job: FixityJob,
  opts: { worker?: string } = {},
): Promise<FixityOutcome | "already checked"> {
  if (job.dueSince) {
    const since = await db
      .selectFrom("fixity_checks")
      .select("id")
      .where("object_kind", "=", job.kind)
      .where("object_id", "=", job.id)
      .where("checked_at", ">=", new Date(job.dueSince))
      .limit(1)
      .executeTakeFirst();
    if (since) return "already checked";
  }
  return checkObject(db, job.kind, job.id, opts);
}

export async function checkObject(
  db: Kysely<Database>,
  kind: StoredObjectKind,
  id: string,
  opts: { worker?: string } = {},
): Promise<FixityOutcome> {
  const obj = await findObject(db, kind, id);
  if (!obj) return "missing";
  let outcome: FixityOutcome;
  let actual: string | null = null;
  let bytes: number | null = null;
  let detail: string | null = null;
  try {
    const h = await hashObject(obj.key);
    actual = h.sha256;
    bytes = h.bytes;
    outcome = h.sha256 === obj.sha256 ? "pass" : "mismatch";
    if (outcome === "mismatch") detail = `stored ${obj.sha256}, read back ${h.sha256}`;
  } catch (err) {
    const failure = storeFailure(err);
    // The store could not be reached: nothing is known about the object, so nothing is
    // recorded and no one is alarmed. The job fails with the plain reason and the queue
    // tries it again; an object still unchecked stays due for the next sweep.
    if (failure === "unreachable")
      throw err instanceof StoreUnreachableError
        ? err
        : new StoreUnreachableError(`read ${obj.key} for its fixity check`, err);
    outcome = failure === "missing" ? "missing" : "error";
    detail =
      failure === "missing"
        ? "the object is not in the bucket"
        : err instanceof Error
          ? err.message
          : String(err);
  }
  await recordFixityResult(db, obj, { outcome, actual, bytes, detail, worker: opts.worker });
  return outcome;
}

export interface FixityResult {
  outcome: FixityOutcome;
  actual: string | null;
  bytes: number | null;
  detail: string | null;
  worker?: string;
  /** Who read the object back when it was not a scheduled check (e.g. "packaging a bag"). */
  readFor?: string;
}

/**
 * Records one fixity result and its event in one transaction; anything but a pass also
 * mails every active curator (the fixity alert). Used by checkObject and by any other
 * reader that finds an object's bytes no longer match its record (the BagIt packager).
 */
export async function recordFixityResult(
  db: Kysely<Database>,
  obj: StoredObject,
  result: FixityResult,
): Promise<void> {
  const { outcome, actual, bytes, detail } = result;
  const { kind, id } = obj;
  await db.transaction().execute(async (trx) => {
    await trx
      .insertInto("fixity_checks")
      .values({
        object_kind: kind,
        object_id: id,
        object_key: obj.key,
        side_id: obj.sideId,
        disc_id: kind === "label_image" ? obj.discId : null,
        expected_sha256: obj.sha256,
        actual_sha256: actual,
        bytes,
        outcome,
        detail,
        worker_identity: result.worker ?? null,
      })
      .execute();
    const disc = await trx
      .selectFrom("discs")
      .select("shelf_mark")
      .where("id", "=", obj.discId)
      .executeTakeFirstOrThrow();
    const side = obj.sideId
      ? await trx
          .selectFrom("sides")
          .select("designation")
          .where("id", "=", obj.sideId)
          .executeTakeFirstOrThrow()
      : null;
    await appendEvent(trx, {
      actorId: null,
      kind: side ? "side.fixity_checked" : "disc.fixity_checked",
      subjectType: side ? "side" : "disc",
      subjectId: obj.sideId ?? obj.discId,
      discId: obj.discId,
      payload: {
        ...(side ? { side: side.designation } : {}),
        object: { kind, id, key: obj.key },
        expectedSha256: obj.sha256,
        actualSha256: actual,
        bytes,
        outcome,
        ...(detail ? { detail } : {}),
        ...(result.readFor ? { readFor: result.readFor } : {}),
      },
    });
    if (outcome !== "pass") {
      const curators = await trx
        .selectFrom("users")
        .select("email")
        .where("role", "=", "curator")
        .where("active", "=", true)
        .execute();
      const what = objectKindWords[kind];
      const where = side ? `${disc.shelf_mark} side ${side.designation}` : disc.shelf_mark;
      for (const c of curators) {
        await enqueueMail(trx, {
          to: c.email,
          subject: `Fixity ${outcome}: ${where} (${what})`,
          text: [
            `The fixity check of the ${what} of ${where} found: ${outcome}.`,
            result.readFor ? `Found while ${result.readFor}.` : "",
            detail ? `Detail: ${detail}` : "",
            `Object: ${obj.key}`,
            "",
            `Open the audit page: ${env().APP_URL}/audit`,
            "Follow the institution's procedure for damaged or missing preservation files; restore from a replica before anything else is done with this side.",
          ]
            .filter((l) => l !== "")
            .join("\n"),
        });
      }
    }
  });
}
