import "server-only";
import { sql, type Transaction } from "kysely";
import { db } from "../../db";
import type { Database } from "../../db/types";
import type { SessionUser } from "../auth/session-user";
import { CurveError, type CurveSpec, fitCurve, RIAA_SPEC } from "../curves";
import { curveErrorToAppError } from "../http/curve-errors";
import { AppError, fromZod } from "../http/errors";
import { appendEvent } from "../provenance";
import {
  calibrationSchema,
  equipmentChainEditSchema,
  equipmentChainSchema,
  equipmentKindLabels,
  RIAA_CALIBRATION_NAME,
} from "../validation/equipment";
import { parseStored, storedCurveSpecSchema } from "../validation/records";
import { inChainOrder, itemName } from "./describe";

// Chains (named sets of the register's items, at most one of each kind but "other") and
// their calibrations. Saving or changing a chain, and recording a calibration, are
// provenance events.

const numeric = (v: string | number | null) => (v === null ? null : Number(v));

async function chainItems(chainIds: readonly string[]) {
  if (!chainIds.length) return [];
  const rows = await db
    .selectFrom("equipment_chain_items as ci")
    .innerJoin("equipment_items as i", "i.id", "ci.item_id")
    .select([
      "ci.chain_id as chainId",
      "i.id",
      "i.kind",
      "i.make",
      "i.model",
      "i.serial",
      "i.stylus_tip_um as stylusTipUm",
      "i.stylus_shape as stylusShape",
      "i.out_of_service_on as outOfServiceOn",
    ])
    .where("ci.chain_id", "in", [...chainIds])
    .execute();
  return rows.map((r) => ({ ...r, stylusTipUm: numeric(r.stylusTipUm) }));
}

const latestCalibrationColumns = sql<{
  id: string;
  calibratedOn: string;
  testDisc: string;
  deviationRmsDb: number;
} | null>`(SELECT json_build_object('id', k.id, 'calibratedOn', k.calibrated_on, 'testDisc', k.test_disc,
  'deviationRmsDb', k.deviation_rms_db) FROM equipment_calibrations k WHERE k.chain_id = c.id
  ORDER BY k.calibrated_on DESC, k.created_at DESC LIMIT 1)`;

/** A chain as the register lists it: its latest calibration and how many transfers were made with it. */
const chainColumns = [
  "c.id",
  "c.name",
  "c.notes",
  "c.retired_at as retiredAt",
  "c.version",
  "c.updated_at as updatedAt",
  latestCalibrationColumns.as("latestCalibration"),
  sql<number>`(SELECT count(*)::int FROM transfers t WHERE t.equipment_chain_id = c.id)`.as("transferCount"),
] as const;

export async function listChains(opts: { includeRetired?: boolean } = {}) {
  let q = db
    .selectFrom("equipment_chains as c")
    .select(chainColumns)
    .orderBy(sql`c.retired_at IS NOT NULL`)
    .orderBy("c.name");
  if (!opts.includeRetired) q = q.where("c.retired_at", "is", null);
  const chains = await q.execute();
  const items = await chainItems(chains.map((c) => c.id));
  return chains.map((c) => ({ ...c, items: inChainOrder(items.filter((i) => i.chainId === c.id)) }));
}

export type ChainJson = Awaited<ReturnType<typeof listChains>>[number];

export async function getChain(id: string) {
  const chain = await db
    .selectFrom("equipment_chains as c")
    .select(chainColumns)
    .where("c.id", "=", id)
    .executeTakeFirst();
  if (!chain) throw new AppError("not_found", 404, "No such chain.");
  const items = inChainOrder(await chainItems([id]));
  const calibrations = await db
    .selectFrom("equipment_calibrations as k")
    .innerJoin("users as u", "u.id", "k.recorded_by")
    .select([
      "k.id",
      "k.calibrated_on as calibratedOn",
      "k.test_disc as testDisc",
      "k.item_ids as itemIds",
      "k.expected_name as expectedName",
      "k.expected_preset_id as expectedPresetId",
      "k.expected_preset_version as expectedPresetVersion",
      "k.expected_spec as expectedSpec",
      "k.points",
      "k.points_kind as pointsKind",
      "k.fit_parameters as fitParameters",
      "k.fitted_spec as fittedSpec",
      "k.fit_rms_db as fitRmsDb",
      "k.deviation_rms_db as deviationRmsDb",
      "k.deviation_worst_db as deviationWorstDb",
      "k.deviation_worst_hz as deviationWorstHz",
      "k.notes",
      "k.created_at as createdAt",
      "u.name as recordedBy",
    ])
    .where("k.chain_id", "=", id)
    .orderBy("k.calibrated_on", "desc")
    .orderBy("k.created_at", "desc")
    .execute();
  return {
    chain: { ...chain, items },
    calibrations: calibrations.map((k) => ({
      ...k,
      expectedSpec: parseStored(storedCurveSpecSchema, k.expectedSpec, {
        table: "equipment_calibrations",
        id: k.id,
        column: "expected_spec",
      }),
      fittedSpec: parseStored(storedCurveSpecSchema, k.fittedSpec, {
        table: "equipment_calibrations",
        id: k.id,
        column: "fitted_spec",
      }),
    })),
  };
}

/** The items must exist, and a chain holds at most one of each kind but "other". */
async function checkItems(trx: Transaction<Database>, itemIds: readonly string[]) {
  const items = await trx
    .selectFrom("equipment_items")
    .select(["id", "kind", "make", "model", "serial", "out_of_service_on"])
    .where("id", "in", [...itemIds])
    .execute();
  if (items.length !== itemIds.length)
    throw new AppError("invalid", 422, "An item of the chain is not in the register.", {
      itemIds: ["Unknown item."],
    });
  const seen = new Map<string, string>();
  for (const i of items) {
    if (i.kind === "other") continue;
    const first = seen.get(i.kind);
    if (first)
      throw new AppError(
        "invalid",
        422,
        `A chain holds one ${equipmentKindLabels[i.kind].toLowerCase()}: ${first} and ${itemName(i)} are both chosen.`,
        { itemIds: [`Two items of kind ${i.kind}.`] },
      );
    seen.set(i.kind, itemName(i));
  }
  return inChainOrder(items);
}

const describeItems = (items: { id: string; kind: string; make: string; model: string; serial: string }[]) =>
  items.map((i) => ({ id: i.id, kind: i.kind, name: itemName(i), serial: i.serial }));

function nameTaken(err: unknown): boolean {
  return (
    typeof err === "object" &&
    err !== null &&
    (err as { code?: string; constraint?: string }).constraint === "equipment_chains_name_unique"
  );
}

export async function createChain(actor: SessionUser, input: unknown) {
  const parsed = equipmentChainSchema.safeParse(input);
  if (!parsed.success) throw fromZod(parsed.error);
  const v = parsed.data;
  try {
    return await db.transaction().execute(async (trx) => {
      const items = await checkItems(trx, v.itemIds);
      const row = await trx
        .insertInto("equipment_chains")
        .values({ name: v.name, notes: v.notes, created_by: actor.id })
        .returning(["id", "name", "version"])
        .executeTakeFirstOrThrow();
      await trx
        .insertInto("equipment_chain_items")
        .values(items.map((i) => ({ chain_id: row.id, item_id: i.id, kind: i.kind })))
        .execute();
      await appendEvent(trx, {
        actorId: actor.id,
        kind: "equipment.chain_saved",
        subjectType: "chain",
        subjectId: row.id,
        payload: { name: v.name, notes: v.notes, items: describeItems(items) },
      });
      return row;
    });
  } catch (err) {
    if (nameTaken(err))
      throw new AppError("conflict", 409, `A chain named “${v.name}” exists already.`, {
        name: ["Already taken."],
      });
    throw err;
  }
}

/** Renames, re-notes, changes the items of, retires or brings back a chain; a stale version answers 409. */
export async function updateChain(actor: SessionUser, id: string, input: unknown) {
  const parsed = equipmentChainEditSchema.safeParse(input);
  if (!parsed.success) throw fromZod(parsed.error);
  const v = parsed.data;
  try {
    return await db.transaction().execute(async (trx) => {
      const old = await trx
        .selectFrom("equipment_chains")
        .select(["id", "name", "notes", "retired_at", "version"])
        .where("id", "=", id)
        .forUpdate()
        .executeTakeFirst();
      if (!old) throw new AppError("not_found", 404, "No such chain.");
      if (old.version !== v.version)
        throw new AppError(
          "conflict",
          409,
          "Someone saved this chain since you opened it: look at it again.",
        );
      const before: Record<string, unknown> = {};
      const after: Record<string, unknown> = {};
      if (v.name !== undefined && v.name !== old.name) [before.name, after.name] = [old.name, v.name];
      if (v.notes !== undefined && v.notes !== old.notes) [before.notes, after.notes] = [old.notes, v.notes];
      if (v.retired !== undefined && v.retired !== (old.retired_at !== null))
        [before.retired, after.retired] = [old.retired_at !== null, v.retired];
      if (v.itemIds) {
        const was = await trx
          .selectFrom("equipment_chain_items as ci")
          .innerJoin("equipment_items as i", "i.id", "ci.item_id")
          .select(["i.id", "i.kind", "i.make", "i.model", "i.serial"])
          .where("ci.chain_id", "=", id)
          .execute();
        const same = was.length === v.itemIds.length && was.every((w) => v.itemIds!.includes(w.id));
        if (!same) {
          const items = await checkItems(trx, v.itemIds);
          await trx.deleteFrom("equipment_chain_items").where("chain_id", "=", id).execute();
          await trx
            .insertInto("equipment_chain_items")
            .values(items.map((i) => ({ chain_id: id, item_id: i.id, kind: i.kind })))
            .execute();
          before.items = describeItems(inChainOrder(was));
          after.items = describeItems(items);
        }
      }
      if (!Object.keys(after).length) return { id, version: old.version, changed: false };
      const row = await trx
        .updateTable("equipment_chains")
        .set({
          ...(v.name !== undefined ? { name: v.name } : {}),
          ...(v.notes !== undefined ? { notes: v.notes } : {}),
          ...(v.retired !== undefined
            ? { retired_at: v.retired ? (old.retired_at ?? new Date()) : null }
            : {}),
          version: sql`version + 1`,
          updated_at: sql`now()`,
        })
        .where("id", "=", id)
        .returning(["id", "version"])
        .executeTakeFirstOrThrow();
      await appendEvent(trx, {
        actorId: actor.id,
        kind: "equipment.chain_edited",
        subjectType: "chain",
        subjectId: id,
        payload: { name: v.name ?? old.name, before, after },
      });
      return { ...row, changed: true };
    });
  } catch (err) {
    if (nameTaken(err))
      throw new AppError("conflict", 409, `A chain named “${v.name}” exists already.`, {
        name: ["Already taken."],
      });
    throw err;
  }
}

/**
 * Records a calibration of a chain: the test disc's measured points are fitted with the
 * curve engine's fit (lib/curves/fit.ts) twice. Once with the chosen corners free, which
 * says what curve the chain actually reproduces; once with only the level free against the
 * curve the disc was cut with, whose residuals are what the chain adds (its deviation).
 */
export async function recordCalibration(actor: SessionUser, chainId: string, input: unknown) {
  const parsed = calibrationSchema.safeParse(input);
  if (!parsed.success) throw fromZod(parsed.error);
  const v = parsed.data;
  let expectedSpec: CurveSpec;
  let expectedName: string;
  if (v.presetId && v.presetVersion) {
    const preset = await db
      .selectFrom("curve_preset_versions")
      .select(["name", "spec"])
      .where("preset_id", "=", v.presetId)
      .where("version", "=", v.presetVersion)
      .executeTakeFirst();
    if (!preset)
      throw new AppError("invalid", 422, "No such preset version.", {
        presetVersion: ["Unknown preset version."],
      });
    expectedSpec = preset.spec;
    expectedName = `${preset.name} (v${v.presetVersion})`;
  } else {
    expectedSpec = RIAA_SPEC;
    expectedName = RIAA_CALIBRATION_NAME;
  }
  let fitted, deviation;
  try {
    fitted = fitCurve({ points: v.points, kind: v.pointsKind, fit: v.fit, initial: expectedSpec });
    deviation = fitCurve({
      points: v.points,
      kind: v.pointsKind,
      fit: ["levelOffset"],
      initial: expectedSpec,
    });
  } catch (err) {
    if (err instanceof CurveError) throw curveErrorToAppError(err, "fit");
    throw err;
  }
  return db.transaction().execute(async (trx) => {
    const chain = await trx
      .selectFrom("equipment_chains")
      .select(["id", "name", "retired_at"])
      .where("id", "=", chainId)
      .forUpdate()
      .executeTakeFirst();
    if (!chain) throw new AppError("not_found", 404, "No such chain.");
    if (chain.retired_at)
      throw new AppError(
        "conflict",
        409,
        `The chain “${chain.name}” is retired: bring it back into use to record a calibration of it.`,
      );
    const items = await trx
      .selectFrom("equipment_chain_items")
      .select("item_id")
      .where("chain_id", "=", chainId)
      .execute();
    const row = await trx
      .insertInto("equipment_calibrations")
      .values({
        chain_id: chainId,
        calibrated_on: v.calibratedOn,
        test_disc: v.testDisc,
        item_ids: items.map((i) => i.item_id),
        expected_name: expectedName,
        expected_preset_id: v.presetId ?? null,
        expected_preset_version: v.presetVersion ?? null,
        expected_spec: JSON.stringify(expectedSpec),
        points: JSON.stringify(v.points),
        points_kind: v.pointsKind,
        fit_parameters: v.fit,
        fitted_spec: JSON.stringify(fitted.spec),
        fit_rms_db: fitted.rmsDb,
        deviation_rms_db: deviation.rmsDb,
        deviation_worst_db: deviation.worstDb,
        deviation_worst_hz: deviation.worstHz,
        notes: v.notes,
        recorded_by: actor.id,
      })
      .returning(["id", "calibrated_on as calibratedOn"])
      .executeTakeFirstOrThrow();
    const summary = {
      fitRmsDb: fitted.rmsDb,
      fittedCorners: fitted.corners.map((c) => ({
        parameter: c.parameter,
        tauUs: c.tauUs,
        fitted: c.fitted,
      })),
      levelOffsetDb: fitted.levelOffsetDb,
      deviationRmsDb: deviation.rmsDb,
      deviationWorstDb: deviation.worstDb,
      deviationWorstHz: deviation.worstHz,
    };
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "equipment.chain_calibrated",
      subjectType: "chain",
      subjectId: chainId,
      payload: {
        chain: chain.name,
        calibrationId: row.id,
        calibratedOn: v.calibratedOn,
        testDisc: v.testDisc,
        expected: expectedName,
        points: v.points.length,
        ...summary,
      },
    });
    return { id: row.id, calibratedOn: row.calibratedOn, expectedName, ...summary };
  });
}
