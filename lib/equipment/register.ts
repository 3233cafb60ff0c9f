import "server-only";
import { sql } from "kysely";
import { db } from "../../db";
import type { SessionUser } from "../auth/session-user";
import { AppError, fromZod } from "../http/errors";
import { appendEvent } from "../provenance";
import { equipmentItemEditSchema, equipmentItemSchema, tipMicrometres } from "../validation/equipment";
import { itemName } from "./describe";
import { countTransfersWithItem, faultWindow } from "./recall";

// The register's items. Every change is a provenance event in the transaction that makes it
// (equipment.item_registered, equipment.item_edited with each changed field before and after).

const itemColumns = [
  "i.id",
  "i.kind",
  "i.make",
  "i.model",
  "i.serial",
  "i.in_service_on as inServiceOn",
  "i.out_of_service_on as outOfServiceOn",
  "i.stylus_tip_um as stylusTipUm",
  "i.stylus_shape as stylusShape",
  "i.notes",
  "i.version",
  "i.created_at as createdAt",
  "i.updated_at as updatedAt",
] as const;

/** Hours of use: the summed durations of the transfers made with the item. */
const hoursOfUse = sql<number>`coalesce((
  SELECT sum(t.duration_seconds) FROM transfer_equipment te JOIN transfers t ON t.id = te.transfer_id
  WHERE te.item_id = i.id), 0) / 3600.0`;
const transferCount = sql<number>`(SELECT count(*)::int FROM transfer_equipment te WHERE te.item_id = i.id)`;
/** The latest finding, so the list can mark an item found at fault since its last good check. */
const latestFinding = sql<{ outcome: "fault" | "good"; foundOn: string; description: string } | null>`(
  SELECT json_build_object('outcome', f.outcome, 'foundOn', f.found_on, 'description', f.description)
  FROM equipment_findings f WHERE f.item_id = i.id ORDER BY f.found_on DESC, f.created_at DESC LIMIT 1)`;

const numeric = (v: string | number | null) => (v === null ? null : Number(v));

export async function listItems() {
  const rows = await db
    .selectFrom("equipment_items as i")
    .select([
      ...itemColumns,
      hoursOfUse.as("hoursOfUse"),
      transferCount.as("transferCount"),
      latestFinding.as("latestFinding"),
      sql<string[]>`coalesce((SELECT array_agg(c.name ORDER BY c.name) FROM equipment_chain_items ci
        JOIN equipment_chains c ON c.id = ci.chain_id WHERE ci.item_id = i.id AND c.retired_at IS NULL), '{}')`.as(
        "chains",
      ),
    ])
    .orderBy(
      sql`array_position(ARRAY['turntable','tonearm','cartridge','stylus','preamplifier','converter','other'], i.kind)`,
    )
    .orderBy("i.make")
    .orderBy("i.model")
    .orderBy("i.serial")
    .execute();
  return rows.map((r) => ({ ...r, stylusTipUm: numeric(r.stylusTipUm), hoursOfUse: Number(r.hoursOfUse) }));
}

export type ItemJson = Awaited<ReturnType<typeof listItems>>[number];

/** One item with its chains, findings, and the calibrations of chains that held it. */
export async function getItem(id: string) {
  const item = await db
    .selectFrom("equipment_items as i")
    .select([
      ...itemColumns,
      hoursOfUse.as("hoursOfUse"),
      transferCount.as("transferCount"),
      latestFinding.as("latestFinding"),
    ])
    .where("i.id", "=", id)
    .executeTakeFirst();
  if (!item) throw new AppError("not_found", 404, "No such item in the register.");
  const [chains, findings, calibrations] = await Promise.all([
    db
      .selectFrom("equipment_chain_items as ci")
      .innerJoin("equipment_chains as c", "c.id", "ci.chain_id")
      .select(["c.id", "c.name", "c.retired_at as retiredAt"])
      .where("ci.item_id", "=", id)
      .orderBy("c.name")
      .execute(),
    db
      .selectFrom("equipment_findings as f")
      .innerJoin("users as u", "u.id", "f.recorded_by")
      .select([
        "f.id",
        "f.found_on as foundOn",
        "f.outcome",
        "f.description",
        "f.created_at as createdAt",
        "u.name as recordedBy",
      ])
      .where("f.item_id", "=", id)
      .orderBy("f.found_on", "desc")
      .orderBy("f.created_at", "desc")
      .execute(),
    db
      .selectFrom("equipment_calibrations as k")
      .innerJoin("equipment_chains as c", "c.id", "k.chain_id")
      .select([
        "k.id",
        "k.calibrated_on as calibratedOn",
        "k.test_disc as testDisc",
        "k.deviation_rms_db as deviationRmsDb",
        "c.id as chainId",
        "c.name as chainName",
      ])
      .where(sql<boolean>`${id}::uuid = ANY(k.item_ids)`)
      .orderBy("k.calibrated_on", "desc")
      .limit(20)
      .execute(),
  ]);
  // A fault's window: the transfers made since the item's last good check, for re-transfer.
  const withWindows = await Promise.all(
    findings.map(async (f) => {
      if (f.outcome !== "fault") return { ...f, window: null, transfersInDoubt: 0 };
      const window = await faultWindow(id, f.foundOn);
      return { ...f, window, transfersInDoubt: await countTransfersWithItem(id, window) };
    }),
  );
  return {
    item: { ...item, stylusTipUm: numeric(item.stylusTipUm), hoursOfUse: Number(item.hoursOfUse) },
    chains,
    findings: withWindows,
    calibrations,
  };
}

function parseItem<T>(
  schema: {
    safeParse(v: unknown): { success: true; data: T } | { success: false; error: import("zod").ZodError };
  },
  input: unknown,
): T {
  const r = schema.safeParse(input);
  if (!r.success) throw fromZod(r.error);
  return r.data;
}

export async function createItem(actor: SessionUser, input: unknown) {
  const v = parseItem(equipmentItemSchema, input);
  return db.transaction().execute(async (trx) => {
    const row = await trx
      .insertInto("equipment_items")
      .values({
        kind: v.kind,
        make: v.make,
        model: v.model,
        serial: v.serial,
        in_service_on: v.inServiceOn ?? null,
        out_of_service_on: v.outOfServiceOn ?? null,
        stylus_tip_um: v.stylusTip ? tipMicrometres(v.stylusTip) : null,
        stylus_shape: v.stylusShape ?? null,
        notes: v.notes,
        created_by: actor.id,
      })
      .returning(["id", "kind", "make", "model", "serial", "version"])
      .executeTakeFirstOrThrow();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "equipment.item_registered",
      subjectType: "equipment",
      subjectId: row.id,
      payload: {
        item: itemName(row),
        after: { ...v, stylusTipUm: v.stylusTip ? tipMicrometres(v.stylusTip) : null, stylusTip: undefined },
      },
    });
    return row;
  });
}

const editable = [
  "make",
  "model",
  "serial",
  "inServiceOn",
  "outOfServiceOn",
  "stylusTipUm",
  "stylusShape",
  "notes",
] as const;

/** Corrects an item (never its kind); a stale version answers 409 with the item as it stands. */
export async function updateItem(actor: SessionUser, id: string, input: unknown) {
  const v = parseItem(equipmentItemEditSchema, input);
  return db.transaction().execute(async (trx) => {
    const old = await trx
      .selectFrom("equipment_items as i")
      .select(itemColumns)
      .where("i.id", "=", id)
      .forUpdate()
      .executeTakeFirst();
    if (!old) throw new AppError("not_found", 404, "No such item in the register.");
    if (v.kind !== undefined && v.kind !== old.kind)
      throw new AppError(
        "invalid",
        422,
        "An item's kind cannot change: register the item again as its kind.",
        {
          kind: ["The kind cannot change."],
        },
      );
    if (old.version !== v.version)
      throw new AppError(
        "conflict",
        409,
        "Someone saved this item since you opened it: look at it again.",
        undefined,
        {
          item: old,
        },
      );
    const check = equipmentItemSchema.safeParse({ ...(input as object), kind: old.kind });
    if (!check.success) throw fromZod(check.error);
    const next = {
      make: v.make,
      model: v.model,
      serial: v.serial,
      inServiceOn: v.inServiceOn ?? null,
      outOfServiceOn: v.outOfServiceOn ?? null,
      stylusTipUm: v.stylusTip ? tipMicrometres(v.stylusTip) : null,
      stylusShape: v.stylusShape ?? null,
      notes: v.notes,
    };
    const before: Record<string, unknown> = {};
    const after: Record<string, unknown> = {};
    for (const k of editable) {
      const was = k === "stylusTipUm" ? numeric(old.stylusTipUm) : old[k];
      if (was !== next[k]) {
        before[k] = was;
        after[k] = next[k];
      }
    }
    if (!Object.keys(after).length) return { id, version: old.version, changed: false };
    const row = await trx
      .updateTable("equipment_items")
      .set({
        make: next.make,
        model: next.model,
        serial: next.serial,
        in_service_on: next.inServiceOn,
        out_of_service_on: next.outOfServiceOn,
        stylus_tip_um: next.stylusTipUm,
        stylus_shape: next.stylusShape,
        notes: next.notes,
        version: sql`version + 1`,
        updated_at: sql`now()`,
      })
      .where("id", "=", id)
      .returning(["id", "version"])
      .executeTakeFirstOrThrow();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "equipment.item_edited",
      subjectType: "equipment",
      subjectId: id,
      payload: { item: itemName(next), kind: old.kind, before, after },
    });
    return { ...row, changed: true };
  });
}
