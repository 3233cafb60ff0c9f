// The items a flat transfer was made with: written once, when the upload is accepted, from
// the chain the engineer picked (and the one item swapped in), and read by the bench, the
// render's coding history, the record and PREMIS. No framework import: the render worker
// reads it too, with its own database handle.
import { type Kysely, sql, type Transaction } from "kysely";
import type { Database, EquipmentKind } from "../../db/types";
import { AppError } from "../http/errors";
import { equipmentKindLabels } from "../validation/equipment";
import { inChainOrder, itemName } from "./describe";

export interface TransferItem {
  itemId: string;
  kind: EquipmentKind;
  make: string;
  model: string;
  serial: string;
  stylusTipUm: number | null;
  stylusShape: string | null;
  swapped: boolean;
}

export interface TransferEquipment {
  chain: { id: string; name: string } | null;
  items: TransferItem[];
}

/** Whether an item is in service on a day (YYYY-MM-DD): from its first day to its last, both kept. */
function inService(item: { in_service_on: string | null; out_of_service_on: string | null }, day: string) {
  return (
    (!item.in_service_on || item.in_service_on <= day) &&
    (!item.out_of_service_on || item.out_of_service_on >= day)
  );
}

/**
 * Records the items of `chainId` (with `swapItemId` in place of the chain's item of its kind)
 * as the ones transfer `transferId` was made with, inside the transaction that accepts the
 * transfer. Refuses a retired chain, an item out of service that day, and a swap without a chain.
 */
export async function recordTransferEquipment(
  trx: Transaction<Database>,
  input: { transferId: string; chainId?: string; swapItemId?: string; day: string },
): Promise<TransferEquipment | null> {
  if (!input.chainId) {
    if (input.swapItemId)
      throw new AppError("invalid", 422, "Pick the chain the item is swapped into.", {
        swapItemId: ["Pick a chain first."],
      });
    return null;
  }
  const chain = await trx
    .selectFrom("equipment_chains")
    .select(["id", "name", "retired_at"])
    .where("id", "=", input.chainId)
    .executeTakeFirst();
  if (!chain)
    throw new AppError("invalid", 422, "No such chain in the register.", { chainId: ["Unknown chain."] });
  if (chain.retired_at)
    throw new AppError("invalid", 422, `The chain “${chain.name}” is retired: pick another.`, {
      chainId: ["This chain is retired."],
    });
  const items = await trx
    .selectFrom("equipment_chain_items as ci")
    .innerJoin("equipment_items as i", "i.id", "ci.item_id")
    .select([
      "i.id",
      "i.kind",
      "i.make",
      "i.model",
      "i.serial",
      "i.stylus_tip_um",
      "i.stylus_shape",
      "i.in_service_on",
      "i.out_of_service_on",
    ])
    .where("ci.chain_id", "=", chain.id)
    .execute();
  let used = items.map((i) => ({ ...i, swapped: false }));
  if (input.swapItemId) {
    const swap = await trx
      .selectFrom("equipment_items")
      .select([
        "id",
        "kind",
        "make",
        "model",
        "serial",
        "stylus_tip_um",
        "stylus_shape",
        "in_service_on",
        "out_of_service_on",
      ])
      .where("id", "=", input.swapItemId)
      .executeTakeFirst();
    if (!swap)
      throw new AppError("invalid", 422, "No such item in the register.", { swapItemId: ["Unknown item."] });
    if (used.some((i) => i.id === swap.id))
      throw new AppError(
        "invalid",
        422,
        `${itemName(swap)} is already in the chain: there is nothing to swap.`,
        {
          swapItemId: ["Already in the chain."],
        },
      );
    // The swapped item takes the place of the chain's own of that kind ("other" items are added).
    if (swap.kind !== "other") used = used.filter((i) => i.kind !== swap.kind);
    used.push({ ...swap, swapped: true });
  }
  const idle = used.filter((i) => !inService(i, input.day));
  if (idle.length)
    throw new AppError(
      "invalid",
      422,
      `Not in service on ${input.day}: ${idle.map((i) => `${equipmentKindLabels[i.kind].toLowerCase()} ${itemName(i)}`).join(", ")}. ` +
        "Correct its service dates in the register, or pick another.",
      {
        [input.swapItemId && idle.some((i) => i.swapped) ? "swapItemId" : "chainId"]: [
          "An item is not in service.",
        ],
      },
    );
  await trx
    .insertInto("transfer_equipment")
    .values(
      used.map((i) => ({
        transfer_id: input.transferId,
        item_id: i.id,
        kind: i.kind,
        make: i.make,
        model: i.model,
        serial: i.serial,
        stylus_tip_um: i.stylus_tip_um,
        stylus_shape: i.stylus_shape,
        swapped: i.swapped,
      })),
    )
    .execute();
  await trx
    .updateTable("transfers")
    .set({ equipment_chain_id: chain.id })
    .where("id", "=", input.transferId)
    .execute();
  return {
    chain: { id: chain.id, name: chain.name },
    items: inChainOrder(
      used.map((i) => ({
        itemId: i.id,
        kind: i.kind,
        make: i.make,
        model: i.model,
        serial: i.serial,
        stylusTipUm: i.stylus_tip_um === null ? null : Number(i.stylus_tip_um),
        stylusShape: i.stylus_shape,
        swapped: i.swapped,
      })),
    ),
  };
}

/** The items each of these transfers was made with, by transfer id (a transfer without a chain is absent). */
export async function equipmentOfTransfers(
  db: Kysely<Database>,
  transferIds: readonly string[],
): Promise<Map<string, TransferEquipment>> {
  const out = new Map<string, TransferEquipment>();
  if (!transferIds.length) return out;
  const rows = await db
    .selectFrom("transfer_equipment as te")
    .innerJoin("transfers as t", "t.id", "te.transfer_id")
    .leftJoin("equipment_chains as c", "c.id", "t.equipment_chain_id")
    .select([
      "te.transfer_id as transferId",
      "te.item_id as itemId",
      "te.kind",
      "te.make",
      "te.model",
      "te.serial",
      "te.stylus_tip_um as stylusTipUm",
      "te.stylus_shape as stylusShape",
      "te.swapped",
      "c.id as chainId",
      "c.name as chainName",
    ])
    .where("te.transfer_id", "in", [...transferIds])
    .execute();
  for (const r of rows) {
    let e = out.get(r.transferId);
    if (!e) {
      e = { chain: r.chainId && r.chainName ? { id: r.chainId, name: r.chainName } : null, items: [] };
      out.set(r.transferId, e);
    }
    e.items.push({
      itemId: r.itemId,
      kind: r.kind,
      make: r.make,
      model: r.model,
      serial: r.serial,
      stylusTipUm: r.stylusTipUm === null ? null : Number(r.stylusTipUm),
      stylusShape: r.stylusShape,
      swapped: r.swapped,
    });
  }
  for (const e of out.values()) e.items = inChainOrder(e.items);
  return out;
}

export interface CalibrationSummary {
  id: string;
  calibratedOn: string;
  testDisc: string;
  deviationRmsDb: number;
  deviationWorstDb: number;
  deviationWorstHz: number;
  /** Whole days from the calibration to the day asked about. */
  ageDays: number;
  /** The chain held other items when it was measured than the transfer used. */
  itemsDiffer: boolean;
}

/** The items a transfer was made with, and its chain's latest calibration on or before the transfer's day. */
export interface TransferEquipmentWithCalibration extends TransferEquipment {
  calibration: CalibrationSummary | null;
}

/**
 * The items each of these transfers was made with and, for one made with a chain, that
 * chain's latest calibration on or before the transfer's day (the lab's days in UTC) and
 * its age that day: two queries, however many transfers. A transfer without a chain is absent.
 */
export async function equipmentWithCalibrations(
  db: Kysely<Database>,
  transferIds: readonly string[],
): Promise<Map<string, TransferEquipmentWithCalibration>> {
  const equipment = await equipmentOfTransfers(db, transferIds);
  const withChain = [...equipment].filter(([, e]) => e.chain).map(([id]) => id);
  const calibrations = withChain.length
    ? await db
        .selectFrom("transfers as t")
        .innerJoinLateral(
          (eb) =>
            eb
              .selectFrom("equipment_calibrations as k")
              .select([
                "k.id",
                "k.calibrated_on",
                "k.test_disc",
                "k.item_ids",
                "k.deviation_rms_db",
                "k.deviation_worst_db",
                "k.deviation_worst_hz",
              ])
              .whereRef("k.chain_id", "=", "t.equipment_chain_id")
              .where("k.calibrated_on", "<=", sql<string>`(t.created_at AT TIME ZONE 'UTC')::date`)
              .orderBy("k.calibrated_on", "desc")
              .orderBy("k.created_at", "desc")
              .limit(1)
              .as("k"),
          (join) => join.onTrue(),
        )
        .selectAll("k")
        .select([
          "t.id as transferId",
          sql<number>`((t.created_at AT TIME ZONE 'UTC')::date - k.calibrated_on)`.as("age_days"),
        ])
        .where("t.id", "in", withChain)
        .execute()
    : [];
  const latest = new Map(calibrations.map((c) => [c.transferId, c]));
  const out = new Map<string, TransferEquipmentWithCalibration>();
  for (const [id, e] of equipment) {
    const c = latest.get(id);
    const measured = new Set(c?.item_ids ?? []);
    out.set(id, {
      ...e,
      calibration: c
        ? {
            id: c.id,
            calibratedOn: c.calibrated_on,
            testDisc: c.test_disc,
            deviationRmsDb: c.deviation_rms_db,
            deviationWorstDb: c.deviation_worst_db,
            deviationWorstHz: c.deviation_worst_hz,
            ageDays: Number(c.age_days),
            // The chain held other items when it was measured than the transfer used.
            itemsDiffer: e.items.length !== measured.size || e.items.some((i) => !measured.has(i.itemId)),
          }
        : null,
    });
  }
  return out;
}
