import "server-only";
import { sql } from "kysely";
import { db } from "../../db";
import type { CurveSpec } from "../curves";
import type { SessionUser } from "../auth/session-user";
import { checkCurveSpec } from "../http/curve-errors";
import { AppError } from "../http/errors";
import { appendEvent } from "../provenance";
import { createPresetSchema, updatePresetSchema } from "../validation/curves";

export interface PresetVersion {
  presetId: string;
  version: number;
  name: string;
  spec: CurveSpec;
  notes: string;
  changeNote: string;
  createdAt: Date;
  createdBy: string | null;
  /** Earlier versions of this preset that this one corrects, and why. */
  correctsVersions: number[];
  correctionNote: string | null;
}

export interface PresetSummary extends PresetVersion {
  id: string;
  currentVersion: number;
}

function presetQuery() {
  return db
    .selectFrom("curve_presets as p")
    .innerJoin("curve_preset_versions as v", (j) =>
      j.onRef("v.preset_id", "=", "p.id").onRef("v.version", "=", "p.current_version"),
    )
    .leftJoin("users as u", "u.id", "v.created_by")
    .select([
      "p.id",
      "p.current_version as currentVersion",
      "v.preset_id as presetId",
      "v.version",
      "v.name",
      "v.spec",
      "v.notes",
      "v.change_note as changeNote",
      "v.created_at as createdAt",
      "u.name as createdBy",
      "v.corrects_versions as correctsVersions",
      "v.correction_note as correctionNote",
    ]);
}

function toSummary(
  row: Awaited<ReturnType<ReturnType<typeof presetQuery>["execute"]>>[number],
): PresetSummary {
  return { ...row, spec: row.spec };
}

export async function listPresets(): Promise<PresetSummary[]> {
  return (await presetQuery().orderBy("v.name").execute()).map(toSummary);
}

export async function getPreset(id: string): Promise<PresetSummary> {
  if (!/^[0-9a-f-]{36}$/i.test(id)) throw new AppError("not_found", 404, "No such preset.");
  const row = await presetQuery().where("p.id", "=", id).executeTakeFirst();
  if (!row) throw new AppError("not_found", 404, "No such preset.");
  return toSummary(row);
}

export async function listPresetVersions(id: string): Promise<PresetVersion[]> {
  await getPreset(id);
  const rows = await db
    .selectFrom("curve_preset_versions as v")
    .leftJoin("users as u", "u.id", "v.created_by")
    .select([
      "v.preset_id as presetId",
      "v.version",
      "v.name",
      "v.spec",
      "v.notes",
      "v.change_note as changeNote",
      "v.created_at as createdAt",
      "u.name as createdBy",
      "v.corrects_versions as correctsVersions",
      "v.correction_note as correctionNote",
    ])
    .where("v.preset_id", "=", id)
    .orderBy("v.version", "desc")
    .execute();
  return rows.map((r) => ({ ...r, spec: r.spec }));
}

async function assertNameFree(name: string, exceptId?: string): Promise<void> {
  let q = db
    .selectFrom("curve_presets")
    .select("id")
    .where(sql`lower(name)`, "=", name.toLowerCase());
  if (exceptId) q = q.where("id", "!=", exceptId);
  if (await q.executeTakeFirst())
    throw new AppError("conflict", 409, `A preset named "${name}" already exists.`, {
      name: ["Already in use."],
    });
}

/** A new preset and its version 1, in one transaction. */
export async function createPreset(actor: SessionUser, input: unknown): Promise<PresetSummary> {
  const { name, spec, notes, changeNote } = createPresetSchema.parse(input);
  checkCurveSpec(spec);
  await assertNameFree(name);
  const id = await db.transaction().execute(async (trx) => {
    const preset = await trx
      .insertInto("curve_presets")
      .values({ name, current_version: 1 })
      .returning("id")
      .executeTakeFirstOrThrow();
    await trx
      .insertInto("curve_preset_versions")
      .values({
        preset_id: preset.id,
        version: 1,
        name,
        spec: JSON.stringify(spec),
        notes,
        change_note: changeNote,
        created_by: actor.id,
      })
      .execute();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "preset.created",
      subjectType: "preset",
      subjectId: preset.id,
      payload: { name, version: 1, after: spec, notes, changeNote },
    });
    return preset.id;
  });
  return getPreset(id);
}

/**
 * An edit makes a new immutable version (who, when, why); the preset then points at it.
 * The row lock serialises concurrent edits so version numbers never collide.
 */
export async function updatePreset(actor: SessionUser, id: string, input: unknown): Promise<PresetSummary> {
  const patch = updatePresetSchema.parse(input);
  const current = await getPreset(id);
  const name = patch.name ?? current.name;
  const spec: CurveSpec = patch.spec ?? current.spec;
  checkCurveSpec(spec);
  if (name.toLowerCase() !== current.name.toLowerCase()) await assertNameFree(name, id);
  await db.transaction().execute(async (trx) => {
    const locked = await trx
      .selectFrom("curve_presets")
      .select("current_version")
      .where("id", "=", id)
      .forUpdate()
      .executeTakeFirstOrThrow();
    const version = locked.current_version + 1;
    // A correction names earlier versions of this preset (the database refuses any other).
    const corrects = [...new Set(patch.corrects)].sort((a, b) => a - b);
    const beyond = corrects.filter((v) => v >= version);
    if (beyond.length)
      throw new AppError(
        "invalid",
        422,
        `Version ${version} can only correct earlier versions (1 to ${version - 1}), not ${beyond.join(", ")}.`,
        { corrects: ["Only earlier versions."] },
      );
    await trx
      .insertInto("curve_preset_versions")
      .values({
        preset_id: id,
        version,
        name,
        spec: JSON.stringify(spec),
        notes: patch.notes ?? current.notes,
        change_note: patch.changeNote,
        created_by: actor.id,
        corrects_versions: corrects,
        correction_note: corrects.length ? (patch.correctionNote ?? null) : null,
      })
      .execute();
    await trx
      .updateTable("curve_presets")
      .set({ name, current_version: version, updated_at: sql`now()` })
      .where("id", "=", id)
      .execute();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "preset.versioned",
      subjectType: "preset",
      subjectId: id,
      payload: {
        name,
        version,
        before: { name: current.name, version: current.version, spec: current.spec },
        after: spec,
        changeNote: patch.changeNote,
        ...(corrects.length ? { corrects, correctionNote: patch.correctionNote } : {}),
      },
    });
  });
  return getPreset(id);
}
