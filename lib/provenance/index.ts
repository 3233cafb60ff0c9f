import { randomUUID } from "node:crypto";
import { type Kysely, sql, type Transaction } from "kysely";
import type { Database } from "../../db/types";
import { type ChainedContent, eventHash, genesisHash } from "./chain";
import { type CheckpointRead, readCheckpointObjects, type StoredCheckpoint } from "./checkpoint-store";

export type SubjectType =
  "person" | "accession" | "disc" | "side" | "preset" | "import" | "lab" | "equipment" | "chain" | "campaign";

export interface NewEvent {
  actorId: string | null;
  /** Dotted kind, e.g. "disc.created", "side.assigned", "person.invited". */
  kind: string;
  subjectType: SubjectType;
  subjectId: string | null;
  /** The disc the event belongs to, for the disc's timeline. */
  discId?: string | null;
  /** Values before and after, and whatever else the event needs to be read later. */
  payload: Record<string, unknown>;
}

// One lock for all appends: each event must see the hash of the one before it.
const appendLockKey = 0x52_49_4c_4c; // "RILL"

/**
 * Appends an event to the provenance log inside the caller's transaction: the change
 * and its event commit together or not at all. Appends are serialised by a
 * transaction-level advisory lock, so the chain has no forks.
 */
export async function appendEvent(
  trx: Transaction<Database>,
  event: NewEvent,
): Promise<{ id: string; hash: string }> {
  const [appended] = await appendEvents(trx, [event]);
  return appended;
}

/** Appends several events in order, chained to each other, with one lock and batched inserts (imports). */
export async function appendEvents(
  trx: Transaction<Database>,
  events: NewEvent[],
): Promise<{ id: string; hash: string }[]> {
  if (!events.length) return [];
  await sql`SELECT pg_advisory_xact_lock(${appendLockKey})`.execute(trx);
  const last = await trx
    .selectFrom("provenance_events")
    .select("hash")
    .orderBy("seq", "desc")
    .limit(1)
    .executeTakeFirst();
  let prevHash = last?.hash ?? genesisHash;
  const rows = events.map((event) => {
    const content: ChainedContent = {
      id: randomUUID(),
      at: new Date().toISOString(),
      actorId: event.actorId,
      kind: event.kind,
      subjectType: event.subjectType,
      subjectId: event.subjectId,
      discId: event.discId ?? null,
      // What is hashed is exactly what jsonb keeps: plain JSON (dates as ISO strings).
      payload: JSON.parse(JSON.stringify(event.payload)) as unknown,
    };
    const hash = eventHash(prevHash, content);
    const row = {
      id: content.id,
      at: content.at,
      actor_id: content.actorId,
      kind: content.kind,
      subject_type: content.subjectType,
      subject_id: content.subjectId,
      disc_id: content.discId,
      payload: JSON.stringify(content.payload),
      prev_hash: prevHash,
      hash,
    };
    prevHash = hash;
    return row;
  });
  // seq follows insertion order within one INSERT, so the chain order is kept.
  for (let i = 0; i < rows.length; i += 500)
    await trx
      .insertInto("provenance_events")
      .values(rows.slice(i, i + 500))
      .execute();
  return rows.map((r) => ({ id: r.id, hash: r.hash }));
}

export interface CheckpointRef {
  key: string;
  headSeq: number;
  events: number;
  takenAt: string;
}

export interface ChainReport {
  ok: boolean;
  /** Entries walked and found intact (up to the first break). */
  events: number;
  /** The last entry that verified. */
  head: { seq: number; hash: string } | null;
  /** The first event whose link or content does not verify, or the entry a checkpoint contradicts. */
  brokenAt?: { seq: number; id: string | null; reason: string };
  /** The first checkpoint (by its head entry) the log contradicts: a truncated or rewritten log. */
  contradicts?: CheckpointRef & { reason: string };
  /** The checkpoints the chain was checked against: always the bucket's objects, never the database's rows. */
  checkpoints: {
    source: "bucket";
    /** Checkpoints whose head entry was reached and agreed. */
    checked: number;
    total: number;
    newest: CheckpointRef | null;
    /** Unreadable checkpoint objects, or database notes of checkpoints the bucket lacks or contradicts. */
    problems: string[];
  };
  checkedAt: string;
}

export interface VerifyOptions {
  batchSize?: number;
  /** Walk only to this entry (a checkpoint being taken); later checkpoints are not expected to be met. */
  throughSeq?: number;
  /** Checkpoints already read (tests); by default they are read from the bucket. */
  checkpoints?: CheckpointRead;
}

const refOf = (c: StoredCheckpoint): CheckpointRef => ({
  key: c.key,
  headSeq: c.headSeq,
  events: c.events,
  takenAt: c.takenAt,
});

/** The bucket's checkpoints, and what the database's notes of them say that the bucket does not. */
async function loadCheckpoints(
  db: Kysely<Database>,
  given?: CheckpointRead,
): Promise<{ read: CheckpointRead; problems: string[] }> {
  const problems: string[] = [];
  let read: CheckpointRead;
  try {
    read = given ?? (await readCheckpointObjects());
  } catch (err) {
    return {
      read: { checkpoints: [], unreadable: [] },
      problems: [
        `The checkpoints could not be read from the bucket (${err instanceof Error ? err.message : String(err)}).`,
      ],
    };
  }
  for (const u of read.unreadable) problems.push(`Checkpoint object ${u.key} is unreadable: ${u.reason}.`);
  const byKey = new Map(read.checkpoints.map((c) => [c.key, c]));
  const rows = await db
    .selectFrom("chain_checkpoints")
    .select(["object_key", "head_seq", "head_hash", "events"])
    .orderBy("head_seq")
    .execute();
  for (const r of rows) {
    const c = byKey.get(r.object_key);
    if (!c)
      problems.push(
        `Checkpoint ${r.object_key} (entry ${Number(r.head_seq)}) is recorded in the database but missing from the bucket.`,
      );
    else if (
      c.headSeq !== Number(r.head_seq) ||
      c.headHash !== r.head_hash ||
      c.events !== Number(r.events)
    ) {
      problems.push(`The database's record of checkpoint ${r.object_key} differs from the bucket's object.`);
    }
  }
  return { read, problems };
}

/**
 * Walks the whole log in order, in batches, recomputing every hash, and checks it
 * against every checkpoint in the bucket: at each checkpoint's head entry the log must
 * hold that entry with the recorded hash and the recorded number of entries up to it.
 * A log cut short or rewritten from some entry on (even with every hash recomputed)
 * contradicts the first checkpoint after the change, which the report names.
 */
export async function verifyChain(db: Kysely<Database>, opts: VerifyOptions = {}): Promise<ChainReport> {
  const batchSize = opts.batchSize ?? 5000;
  const { read, problems } = await loadCheckpoints(db, opts.checkpoints);
  const cps = read.checkpoints;
  const newest = cps.length ? refOf(cps[cps.length - 1]) : null;
  let checked = 0;
  let prev = genesisHash;
  let head: ChainReport["head"] = null;
  let afterSeq = 0;
  let events = 0;
  let ci = 0;
  const finish = (extra: Partial<ChainReport> = {}): ChainReport => {
    const broken = Boolean(extra.brokenAt || extra.contradicts);
    return {
      ok: !broken && problems.length === 0,
      events,
      head,
      ...extra,
      checkpoints: { source: "bucket", checked, total: cps.length, newest, problems },
      checkedAt: new Date().toISOString(),
    };
  };
  const contradiction = (c: StoredCheckpoint, seq: number, id: string | null, reason: string) =>
    finish({ brokenAt: { seq, id, reason }, contradicts: { ...refOf(c), reason } });

  for (;;) {
    let q = db
      .selectFrom("provenance_events")
      .select([
        "seq",
        "id",
        "at",
        "actor_id",
        "kind",
        "subject_type",
        "subject_id",
        "disc_id",
        "payload",
        "prev_hash",
        "hash",
      ])
      .where("seq", ">", afterSeq)
      .orderBy("seq")
      .limit(batchSize);
    if (opts.throughSeq !== undefined) q = q.where("seq", "<=", opts.throughSeq);
    const rows = await q.execute();
    for (const r of rows) {
      const seq = Number(r.seq);
      if (r.prev_hash !== prev) {
        return finish({
          brokenAt: { seq, id: r.id, reason: "its link does not name the previous event's hash" },
        });
      }
      const content: ChainedContent = {
        id: r.id,
        at: r.at.toISOString(),
        actorId: r.actor_id,
        kind: r.kind,
        subjectType: r.subject_type,
        subjectId: r.subject_id,
        discId: r.disc_id,
        payload: r.payload,
      };
      if (eventHash(prev, content) !== r.hash) {
        return finish({ brokenAt: { seq, id: r.id, reason: "its content no longer matches its hash" } });
      }
      // A checkpoint whose head lies before this entry and was never met: its head is gone.
      if (ci < cps.length && cps[ci].headSeq < seq) {
        const c = cps[ci];
        return contradiction(
          c,
          c.headSeq,
          null,
          `entry ${c.headSeq}, the head of the checkpoint, is missing from the log: entries have been removed`,
        );
      }
      prev = r.hash;
      events++;
      afterSeq = seq;
      head = { seq, hash: r.hash };
      for (; ci < cps.length && cps[ci].headSeq === seq; ci++) {
        const c = cps[ci];
        if (c.headHash !== r.hash)
          return contradiction(
            c,
            seq,
            r.id,
            `entry ${seq}'s hash is not the one the checkpoint recorded: the log up to it has been rewritten`,
          );
        if (c.events !== events)
          return contradiction(
            c,
            seq,
            r.id,
            `the log holds ${events} entries up to entry ${seq}; the checkpoint counted ${c.events}: entries have been removed or added`,
          );
        checked++;
      }
    }
    if (rows.length < batchSize) break;
  }
  if (ci < cps.length && (opts.throughSeq === undefined || cps[ci].headSeq <= opts.throughSeq)) {
    const c = cps[ci];
    return contradiction(
      c,
      c.headSeq,
      null,
      `the log ends at entry ${head?.seq ?? 0} with ${events} entries, but the checkpoint ` +
        `recorded entry ${c.headSeq} with ${c.events}: entries have been removed`,
    );
  }
  return finish();
}
