import { randomUUID } from "node:crypto";
import { type Kysely, sql, type Transaction } from "kysely";
import type { Database } from "../../db/types";
import { type ChainedContent, eventHash, genesisHash } from "./chain";

export type SubjectType = "person" | "accession" | "disc" | "side" | "preset" | "import" | "lab";

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
export async function appendEvent(trx: Transaction<Database>, event: NewEvent): Promise<{ id: string; hash: string }> {
  const [appended] = await appendEvents(trx, [event]);
  return appended;
}

/** Appends several events in order, chained to each other, with one lock and batched inserts (imports). */
export async function appendEvents(trx: Transaction<Database>, events: NewEvent[]): Promise<{ id: string; hash: string }[]> {
  if (!events.length) return [];
  await sql`SELECT pg_advisory_xact_lock(${appendLockKey})`.execute(trx);
  const last = await trx.selectFrom("provenance_events").select("hash").orderBy("seq", "desc").limit(1).executeTakeFirst();
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
  for (let i = 0; i < rows.length; i += 500) await trx.insertInto("provenance_events").values(rows.slice(i, i + 500)).execute();
  return rows.map((r) => ({ id: r.id, hash: r.hash }));
}

export interface ChainReport {
  ok: boolean;
  events: number;
  /** The first event whose link or content does not verify. */
  brokenAt?: { seq: number; id: string; reason: string };
  checkedAt: string;
}

/** Walks the whole log in order, in batches, recomputing every hash. */
export async function verifyChain(db: Kysely<Database>, batchSize = 5000): Promise<ChainReport> {
  let prev = genesisHash;
  let afterSeq = 0;
  let events = 0;
  for (;;) {
    const rows = await db
      .selectFrom("provenance_events")
      .select(["seq", "id", "at", "actor_id", "kind", "subject_type", "subject_id", "disc_id", "payload", "prev_hash", "hash"])
      .where("seq", ">", afterSeq)
      .orderBy("seq")
      .limit(batchSize)
      .execute();
    for (const r of rows) {
      const seq = Number(r.seq);
      if (r.prev_hash !== prev) {
        return { ok: false, events, brokenAt: { seq, id: r.id, reason: "its link does not name the previous event's hash" }, checkedAt: new Date().toISOString() };
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
        return { ok: false, events, brokenAt: { seq, id: r.id, reason: "its content no longer matches its hash" }, checkedAt: new Date().toISOString() };
      }
      prev = r.hash;
      events++;
      afterSeq = seq;
    }
    if (rows.length < batchSize) break;
  }
  return { ok: true, events, checkedAt: new Date().toISOString() };
}
