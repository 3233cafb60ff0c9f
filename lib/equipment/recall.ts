import "server-only";
import { stringify } from "csv-stringify/sync";
import { sql } from "kysely";
import { db } from "../../db";
import type { SessionUser } from "../auth/session-user";
import { protectFormula } from "../catalogue/csv-format";
import { AppError, fromZod } from "../http/errors";
import { appendEvent } from "../provenance";
import { findingSchema, recallQuerySchema } from "../validation/equipment";
import { itemName } from "./describe";

// Recall: which transfers used an item between two days, and, once a fault is found, every
// transfer made with it since its last good check, for re-transfer.
//
// A "good check" of an item is either a finding recorded as good (an inspection that found
// it sound) or a calibration of a chain that held it (the chain measured within its
// tolerance that day). The window of a fault runs from the day of the last good check
// before the fault's day to the fault's day, both days kept: a day holds no order between a
// check and a transfer, so a transfer on the day of the check is listed too (the cautious
// reading).

export interface RecallWindow {
  from: string | null;
  to: string;
  /** What the window starts from: the last good check, or nothing (since the item's first transfer). */
  since: { kind: "finding" | "calibration"; on: string; what: string } | null;
}

/** The window of transfers a fault found on `foundOn` puts in doubt. */
export async function faultWindow(itemId: string, foundOn: string): Promise<RecallWindow> {
  const [goodFinding, calibration] = await Promise.all([
    db
      .selectFrom("equipment_findings")
      .select(["found_on", "description"])
      .where("item_id", "=", itemId)
      .where("outcome", "=", "good")
      .where("found_on", "<=", foundOn)
      .orderBy("found_on", "desc")
      .limit(1)
      .executeTakeFirst(),
    db
      .selectFrom("equipment_calibrations as k")
      .innerJoin("equipment_chains as c", "c.id", "k.chain_id")
      .select(["k.calibrated_on", "k.test_disc", "c.name"])
      .where(sql<boolean>`${itemId}::uuid = ANY(k.item_ids)`)
      .where("k.calibrated_on", "<=", foundOn)
      .orderBy("k.calibrated_on", "desc")
      .limit(1)
      .executeTakeFirst(),
  ]);
  const candidates: NonNullable<RecallWindow["since"]>[] = [];
  if (goodFinding)
    candidates.push({
      kind: "finding",
      on: goodFinding.found_on,
      what: `inspected and found sound: ${goodFinding.description}`,
    });
  if (calibration)
    candidates.push({
      kind: "calibration",
      on: calibration.calibrated_on,
      what: `calibration of ${calibration.name} with ${calibration.test_disc}`,
    });
  candidates.sort((a, b) => (a.on < b.on ? 1 : -1));
  const since = candidates[0] ?? null;
  return { from: since?.on ?? null, to: foundOn, since };
}

export interface RecallRow {
  transferId: string;
  transferredOn: string;
  createdAt: Date;
  sideId: string;
  discId: string;
  shelfMark: string;
  side: string;
  title: string;
  labelName: string;
  catalogueNumber: string;
  fileName: string;
  durationSeconds: number;
  sha256: string;
  engineer: string;
  chain: string | null;
  swapped: boolean;
  /** The side still stands on this transfer (its access copy is made from it). */
  current: boolean;
  sideStatus: string;
}

/** A transfer's day: the lab's days are UTC days. */
const transferDay = sql<string>`to_char(t.created_at AT TIME ZONE 'UTC', 'YYYY-MM-DD')`;

/** The transfers made with an item between two days (inclusive), with their sides; optionally only those a side stands on. */
function madeWith(itemId: string, f: { from?: string | null; to?: string | null; currentOnly?: boolean }) {
  let q = db
    .selectFrom("transfer_equipment as te")
    .innerJoin("transfers as t", "t.id", "te.transfer_id")
    .innerJoin("sides as s", "s.id", "t.side_id")
    .where("te.item_id", "=", itemId);
  if (f.from) q = q.where(transferDay, ">=", f.from);
  if (f.to) q = q.where(transferDay, "<=", f.to);
  if (f.currentOnly) q = q.where(sql<boolean>`s.current_transfer_id = t.id`);
  return q;
}

/** How many transfers a fault's window puts in doubt, counted in the database (the item page shows the number). */
export async function countTransfersWithItem(itemId: string, window: { from: string | null; to: string }) {
  const r = await madeWith(itemId, window)
    .select(sql<number>`count(*)::int`.as("n"))
    .executeTakeFirstOrThrow();
  return r.n;
}

/** Transfers made with the item, between two days (inclusive, the lab's days in UTC), newest first. */
export async function transfersWithItem(itemId: string, query: unknown) {
  const parsed = recallQuerySchema.safeParse(query);
  if (!parsed.success) throw fromZod(parsed.error);
  const q = parsed.data;
  if (q.from && q.to && q.to < q.from)
    throw new AppError("invalid", 422, "The last day comes before the first.", {
      to: ["Before the first day."],
    });
  const item = await db
    .selectFrom("equipment_items")
    .select(["id", "kind", "make", "model", "serial"])
    .where("id", "=", itemId)
    .executeTakeFirst();
  if (!item) throw new AppError("not_found", 404, "No such item in the register.");
  const rows = madeWith(itemId, q)
    .innerJoin("discs as d", "d.id", "s.disc_id")
    .innerJoin("users as u", "u.id", "t.uploaded_by")
    .leftJoin("equipment_chains as c", "c.id", "t.equipment_chain_id")
    .select([
      "t.id as transferId",
      transferDay.as("transferredOn"),
      "t.created_at as createdAt",
      "s.id as sideId",
      "d.id as discId",
      "d.shelf_mark as shelfMark",
      "s.designation as side",
      "s.title",
      "d.label_name as labelName",
      "d.catalogue_number as catalogueNumber",
      "t.file_name as fileName",
      "t.duration_seconds as durationSeconds",
      "t.sha256",
      "u.name as engineer",
      "c.name as chain",
      "te.swapped",
      sql<boolean>`s.current_transfer_id IS NOT DISTINCT FROM t.id`.as("current"),
      "s.status as sideStatus",
    ]);
  const transfers: RecallRow[] = (await rows.orderBy("t.created_at", "desc").limit(10_000).execute()).map(
    (r) => ({
      ...r,
      durationSeconds: Number(r.durationSeconds),
    }),
  );
  const hours = transfers.reduce((s, t) => s + t.durationSeconds, 0) / 3600;
  return {
    item: { ...item, name: itemName(item) },
    filters: { from: q.from ?? null, to: q.to ?? null, currentOnly: q.currentOnly },
    format: q.format,
    transfers,
    hours,
  };
}

/** The recall as CSV, one transfer a row, for the lab's re-transfer list. */
export function recallCsv(result: Awaited<ReturnType<typeof transfersWithItem>>): string {
  const head = [
    "transferred_at",
    "shelf_mark",
    "side",
    "title",
    "label",
    "catalogue_number",
    "file_name",
    "duration_seconds",
    "sha256",
    "engineer",
    "chain",
    "item_swapped_in",
    "current_transfer",
    "side_status",
    "transfer_id",
  ];
  const rows = result.transfers.map((t) => [
    t.createdAt.toISOString(),
    t.shelfMark,
    t.side,
    t.title,
    t.labelName,
    t.catalogueNumber,
    t.fileName,
    t.durationSeconds.toFixed(3),
    t.sha256,
    t.engineer,
    t.chain ?? "",
    t.swapped ? "yes" : "no",
    t.current ? "yes" : "no",
    t.sideStatus,
    t.transferId,
  ]);
  // Written as the catalogue's export is: formula-looking cells protected, a byte-order mark and CRLF line ends.
  return stringify([head, ...rows.map((r) => r.map(protectFormula))], {
    bom: true,
    record_delimiter: "windows",
  });
}

/** Records a finding against an item; a fault answers with the window of transfers it puts in doubt. */
export async function recordFinding(actor: SessionUser, itemId: string, input: unknown) {
  const parsed = findingSchema.safeParse(input);
  if (!parsed.success) throw fromZod(parsed.error);
  const v = parsed.data;
  const item = await db
    .selectFrom("equipment_items")
    .select(["id", "kind", "make", "model", "serial"])
    .where("id", "=", itemId)
    .executeTakeFirst();
  if (!item) throw new AppError("not_found", 404, "No such item in the register.");
  const window = v.outcome === "fault" ? await faultWindow(itemId, v.foundOn) : null;
  const affected = window
    ? await transfersWithItem(itemId, { from: window.from ?? undefined, to: window.to })
    : null;
  const row = await db.transaction().execute(async (trx) => {
    const f = await trx
      .insertInto("equipment_findings")
      .values({
        item_id: itemId,
        found_on: v.foundOn,
        outcome: v.outcome,
        description: v.description,
        recorded_by: actor.id,
      })
      .returning(["id", "found_on as foundOn", "outcome", "description"])
      .executeTakeFirstOrThrow();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "equipment.finding_recorded",
      subjectType: "equipment",
      subjectId: itemId,
      payload: {
        item: itemName(item),
        serial: item.serial,
        findingId: f.id,
        foundOn: v.foundOn,
        outcome: v.outcome,
        description: v.description,
        ...(window
          ? {
              window: { from: window.from, to: window.to, since: window.since },
              transfersInDoubt: affected?.transfers.length ?? 0,
            }
          : {}),
      },
    });
    return f;
  });
  return {
    finding: row,
    window,
    transfers: affected?.transfers ?? [],
  };
}
