import "server-only";
import { createHash } from "node:crypto";
import { db } from "../../db";
import { type CurveSpec, mergeCurve } from "../curves";
import type { SessionUser } from "../auth/session-user";
import { checkCurveSpec } from "../http/curve-errors";
import { AppError } from "../http/errors";
import { appendEvents, type NewEvent } from "../provenance";
import { canonicalJson } from "../provenance/chain";
import { curveChoosableStatuses, curveChosen, lockSides } from "../sides/lifecycle";
import { statusLabels } from "../validation/catalogue";
import { curveChoiceSchema } from "../validation/transfers";
import {
  evidenceSummary,
  fitTestDiscMeasurement,
  insertTestDiscEvidence,
  measurementJson,
} from "./test-disc-evidence";

function sha256Hex(text: string): string {
  return createHash("sha256").update(text).digest("hex");
}

/**
 * Records a curve choice for each side, keeping the preset version's values as they are
 * now, with one event per side; a side that was waiting for its curve moves to
 * "curve chosen". Only the engineer the sides are assigned to may choose. All or nothing.
 */
export async function chooseCurve(
  actor: SessionUser,
  input: unknown,
): Promise<{ choices: { sideId: string; choiceId: string }[] }> {
  const c = curveChoiceSchema.parse(input);
  return db.transaction().execute(async (trx) => {
    let preset: { name: string; spec: CurveSpec } | null = null;
    if (c.presetId && c.presetVersion) {
      const v = await trx
        .selectFrom("curve_preset_versions")
        .select(["name", "spec"])
        .where("preset_id", "=", c.presetId)
        .where("version", "=", c.presetVersion)
        .executeTakeFirst();
      if (!v)
        throw new AppError("invalid", 422, "That preset version does not exist.", {
          presetVersion: ["Unknown preset version."],
        });
      preset = { name: v.name, spec: v.spec };
    }
    // The same merge the bench plots and plays (preset, then overrides, then transfer ÷ cut speed).
    const spec = mergeCurve(preset?.spec ?? null, c.overrides, c.cutSpeedRpm, c.transferSpeedRpm);
    checkCurveSpec(spec, "overrides");
    // A test-disc measurement is read and fitted here, once for every side it is recorded for.
    const measured = c.measurement ? fitTestDiscMeasurement(c.measurement, spec) : null;
    // Every side locked through the lifecycle, in a stable order.
    const sides = await lockSides(trx, c.sideIds);
    if (sides.length !== new Set(c.sideIds).size)
      throw new AppError("not_found", 404, "One of those sides does not exist.");
    const shelfMarks = new Map(
      (
        await trx
          .selectFrom("discs")
          .select(["id", "shelf_mark"])
          .where("id", "in", [...new Set(sides.map((s) => s.disc_id))])
          .execute()
      ).map((d) => [d.id, d.shelf_mark]),
    );
    // Each side's current choice (the one this replaces): one query, not one per side.
    const previousIds = sides.map((s) => s.current_curve_choice_id).filter((id): id is string => !!id);
    const previousRows = previousIds.length
      ? await trx.selectFrom("curve_choices").select(["id", "spec"]).where("id", "in", previousIds).execute()
      : [];
    const previousById = new Map(previousRows.map((p) => [p.id, p]));
    const specSha256 = sha256Hex(canonicalJson(spec));
    const choices: { sideId: string; choiceId: string }[] = [];
    const events: NewEvent[] = [];
    const order = new Map(c.sideIds.map((id, i) => [id, i]));
    sides.sort((a, b) => order.get(a.id)! - order.get(b.id)!);
    for (const s of sides) {
      const where = `${shelfMarks.get(s.disc_id)} side ${s.designation}`;
      if (s.assigned_engineer_id !== actor.id)
        throw new AppError("forbidden", 403, `${where} is not assigned to you.`);
      if (!curveChoosableStatuses.has(s.status)) {
        throw new AppError(
          "conflict",
          409,
          `${where} is ${statusLabels[s.status].toLowerCase()}: its curve can no longer change` +
            `${s.status === "in_review" ? " unless a curator returns it" : ""}.`,
        );
      }
      const previous = s.current_curve_choice_id ? previousById.get(s.current_curve_choice_id) : undefined;
      const row = await trx
        .insertInto("curve_choices")
        .values({
          side_id: s.id,
          preset_id: c.presetId ?? null,
          preset_version: c.presetVersion ?? null,
          preset_name: preset?.name ?? null,
          preset_spec: preset ? JSON.stringify(preset.spec) : null,
          overrides: JSON.stringify(c.overrides),
          spec: JSON.stringify(spec),
          spec_sha256: specSha256,
          cut_speed_rpm: c.cutSpeedRpm,
          transfer_speed_rpm: c.transferSpeedRpm,
          correct_speed: c.correctSpeed,
          rationale: c.rationale,
          evidence_kind: c.evidenceKind,
          evidence: c.evidence,
          chosen_by: actor.id,
        })
        .returning("id")
        .executeTakeFirstOrThrow();
      if (measured) await insertTestDiscEvidence(trx, row.id, measured);
      events.push({
        actorId: actor.id,
        kind: previous ? "side.curve_changed" : "side.curve_chosen",
        subjectType: "side",
        subjectId: s.id,
        discId: s.disc_id,
        payload: {
          side: s.designation,
          choiceId: row.id,
          preset: preset
            ? { id: c.presetId, version: c.presetVersion, name: preset.name, values: preset.spec }
            : null,
          overrides: c.overrides,
          cutSpeedRpm: c.cutSpeedRpm,
          transferSpeedRpm: c.transferSpeedRpm,
          correctSpeed: c.correctSpeed,
          spec,
          specSha256,
          rationale: c.rationale,
          evidenceKind: c.evidenceKind,
          evidence: c.evidence,
          ...(measured ? { testDisc: evidenceSummary(measured) } : {}),
          ...(previous ? { before: { choiceId: previous.id, spec: previous.spec } } : {}),
        },
      });
      // The side's current curve, and where the side goes (lib/sides/lifecycle.ts).
      await curveChosen(trx, actor, s, row.id, events);
      choices.push({ sideId: s.id, choiceId: row.id });
    }
    // In the order they happened, chained in one append.
    await appendEvents(trx, events);
    return { choices };
  });
}

export async function listCurveChoices(sideId: string) {
  const rows = await db
    .selectFrom("curve_choices as c")
    .innerJoin("users as u", "u.id", "c.chosen_by")
    .leftJoin("curve_choice_evidence as e", "e.choice_id", "c.id")
    .select([
      "c.id",
      "c.preset_id as presetId",
      "c.preset_version as presetVersion",
      "c.preset_name as presetName",
      "c.preset_spec as presetSpec",
      "c.overrides",
      "c.spec",
      "c.cut_speed_rpm as cutSpeedRpm",
      "c.transfer_speed_rpm as transferSpeedRpm",
      "c.correct_speed as correctSpeed",
      "c.rationale",
      "c.evidence_kind as evidenceKind",
      "c.evidence",
      "c.chosen_at as chosenAt",
      "u.name as chosenBy",
      // The test-disc measurement the choice rests on, as the server fitted it (null for other evidence).
      measurementJson("e").as("measurement"),
    ])
    .where("c.side_id", "=", sideId)
    .orderBy("c.chosen_at", "desc")
    .execute();
  return rows.map((r) => ({
    ...r,
    cutSpeedRpm: Number(r.cutSpeedRpm),
    transferSpeedRpm: Number(r.transferSpeedRpm),
  }));
}
