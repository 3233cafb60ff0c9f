import "server-only";
import { sql } from "kysely";
import { db } from "../../db";
import type { SideStatus } from "../../db/types";
import { type CurveSpec, mergeCurve, resolveCurve } from "../curves";
import type { SessionUser } from "../auth/session-user";
import { AppError } from "../http/errors";
import { asCurveAppError } from "../presets/curve-check";
import { appendEvents, type NewEvent } from "../provenance";
import { statusLabels } from "../validation/catalogue";
import { curveChoiceSchema, curveChoosableStatuses } from "../validation/transfers";

/**
 * Records a curve choice for each side, keeping the preset version's values as they are
 * now, with one event per side; a side that was waiting for its curve moves to
 * "curve chosen". Only the engineer the sides are assigned to may choose. All or nothing.
 */
export async function chooseCurve(actor: SessionUser, input: unknown): Promise<{ choices: { sideId: string; choiceId: string }[] }> {
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
      if (!v) throw new AppError("invalid", 422, "That preset version does not exist.", { presetVersion: ["Unknown preset version."] });
      preset = { name: v.name, spec: v.spec as CurveSpec };
    }
    // The same merge the bench plots and plays (preset, then overrides, then transfer ÷ cut speed).
    const spec = mergeCurve(preset?.spec ?? null, c.overrides as Partial<CurveSpec>, c.cutSpeedRpm, c.transferSpeedRpm);
    try {
      resolveCurve(spec);
    } catch (err) {
      throw asCurveAppError(err, "overrides");
    }
    const sides = await trx
      .selectFrom("sides as s")
      .innerJoin("discs as d", "d.id", "s.disc_id")
      .select(["s.id", "s.disc_id", "s.designation", "s.status", "s.assigned_engineer_id", "s.version", "d.shelf_mark"])
      .where("s.id", "in", c.sideIds)
      .forUpdate()
      .execute();
    if (sides.length !== new Set(c.sideIds).size) throw new AppError("not_found", 404, "One of those sides does not exist.");
    const ids = sides.map((s) => s.id);
    // Each side's current choice (the one this replaces) and which sides have a transfer: one query each, not two per side.
    const [previousRows, transferRows] = await Promise.all([
      trx.selectFrom("curve_choices").distinctOn("side_id").select(["side_id", "id", "spec"]).where("side_id", "in", ids).orderBy("side_id").orderBy("chosen_at", "desc").execute(),
      trx.selectFrom("transfers").select("side_id").distinct().where("side_id", "in", ids).execute(),
    ]);
    const previousBySide = new Map(previousRows.map((p) => [p.side_id, p]));
    const transferred = new Set(transferRows.map((t) => t.side_id));
    const choices: { sideId: string; choiceId: string }[] = [];
    const events: NewEvent[] = [];
    for (const s of sides) {
      const where = `${s.shelf_mark} side ${s.designation}`;
      if (s.assigned_engineer_id !== actor.id) throw new AppError("forbidden", 403, `${where} is not assigned to you.`);
      if (!curveChoosableStatuses.has(s.status)) {
        throw new AppError("conflict", 409, `${where} is ${statusLabels[s.status].toLowerCase()}: its curve can no longer change${s.status === "in_review" ? " unless a curator returns it" : ""}.`);
      }
      const previous = previousBySide.get(s.id);
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
          cut_speed_rpm: c.cutSpeedRpm,
          transfer_speed_rpm: c.transferSpeedRpm,
          rationale: c.rationale,
          evidence_kind: c.evidenceKind,
          evidence: c.evidence,
          chosen_by: actor.id,
        })
        .returning("id")
        .executeTakeFirstOrThrow();
      events.push({
        actorId: actor.id,
        kind: previous ? "side.curve_changed" : "side.curve_chosen",
        subjectType: "side",
        subjectId: s.id,
        discId: s.disc_id,
        payload: {
          side: s.designation,
          choiceId: row.id,
          preset: preset ? { id: c.presetId, version: c.presetVersion, name: preset.name, values: preset.spec } : null,
          overrides: c.overrides,
          cutSpeedRpm: c.cutSpeedRpm,
          transferSpeedRpm: c.transferSpeedRpm,
          spec,
          rationale: c.rationale,
          evidenceKind: c.evidenceKind,
          evidence: c.evidence,
          ...(previous ? { before: { choiceId: previous.id, spec: previous.spec } } : {}),
        },
      });
      // Where the side goes: waiting for a curve → curve chosen, and on to transferred
      // when an accepted transfer already stands (a returned side); a rendered side's
      // access copy is out of date with the new curve → back to transferred.
      const path: SideStatus[] = [];
      if (s.status === "assigned" || s.status === "returned") {
        path.push("curve_chosen");
        if (transferred.has(s.id)) path.push("transferred");
      } else if (s.status === "rendered") {
        path.push("transferred");
      }
      let from: SideStatus = s.status;
      for (const to of path) {
        events.push({
          actorId: actor.id,
          kind: "side.status_changed",
          subjectType: "side",
          subjectId: s.id,
          discId: s.disc_id,
          payload: { side: s.designation, before: { status: from }, after: { status: to }, ...(to === "transferred" ? { note: from === "rendered" ? "the curve changed: the access copy must be rendered again" : "the accepted flat transfer stands" } : {}) },
        });
        from = to;
      }
      if (path.length) {
        await trx.updateTable("sides").set({ status: from, return_reason: null, version: s.version + 1, updated_at: sql`now()` }).where("id", "=", s.id).execute();
      }
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
      "c.rationale",
      "c.evidence_kind as evidenceKind",
      "c.evidence",
      "c.chosen_at as chosenAt",
      "u.name as chosenBy",
    ])
    .where("c.side_id", "=", sideId)
    .orderBy("c.chosen_at", "desc")
    .execute();
  return rows.map((r) => ({ ...r, cutSpeedRpm: Number(r.cutSpeedRpm), transferSpeedRpm: Number(r.transferSpeedRpm), spec: r.spec as CurveSpec }));
}
