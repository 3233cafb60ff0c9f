import "server-only";
import { createHash } from "node:crypto";
import { sql, type Transaction } from "kysely";
import { z } from "zod";
import { db } from "../../db";
import type { CampaignSideState, Database, SideStatus } from "../../db/types";
import type { SessionUser } from "../auth/session-user";
import { type FitParameter, mergeCurve } from "../curves";
import { checkCurveSpec } from "../http/curve-errors";
import { AppError } from "../http/errors";
import { appendEvent, appendEvents, type NewEvent } from "../provenance";
import { canonicalJson } from "../provenance/chain";
import { getSettings, type LabSettings } from "../settings";
import { campaignCurveChosen, type LockedSide, lockSides } from "../sides/lifecycle";
import { queueRender } from "../transfers/renders";
import {
  evidenceSummary,
  insertTestDiscEvidence,
  refitTestDiscEvidence,
  type TestDiscEvidence,
} from "../transfers/test-disc-evidence";
import { cleanString } from "../validation/text";
import { parseStored, storedCurveSpecSchema } from "../validation/records";
import { campaignCounts, settleCampaign } from "./progress";

// Re-render campaigns: when a preset version turns out wrong and a later version corrects
// it, a curator or an engineer re-chooses the curve of the sides that rest on the wrong one
// (each keeping its own corner overrides) and has them rendered again through the render
// queue; sides that had been finished work go back to review. lib/campaigns/progress.ts
// moves a campaign on as its renders finish.

const uuid = (what: string) => z.uuid({ error: `Unknown ${what}.` });

export const startCampaignSchema = z.object({
  presetId: uuid("preset"),
  correctingVersion: z.number().int().positive(),
  sideIds: z.array(uuid("side")).min(1, "Choose at least one side.").max(5000),
  title: cleanString().trim().max(200).optional(),
});

export const retryCampaignSchema = z.object({
  /** Only these failed sides; without it, every failed side. */
  sideIds: z.array(uuid("side")).max(5000).optional(),
});

/** Where a side stands, as the uses list and the campaign page say it. */
export type UseState = "chosen" | "rendered" | "in_review" | "approved";
export function useState(status: SideStatus): UseState {
  if (status === "rendered" || status === "in_review" || status === "approved") return status;
  return "chosen";
}

function sha256Hex(text: string): string {
  return createHash("sha256").update(text).digest("hex");
}

interface CorrectingVersion {
  presetId: string;
  presetName: string;
  version: number;
  spec: unknown;
  corrects: number[];
  note: string;
}

async function correctingVersion(
  trx: Transaction<Database>,
  presetId: string,
  version: number,
): Promise<CorrectingVersion> {
  const v = await trx
    .selectFrom("curve_preset_versions as v")
    .innerJoin("curve_presets as p", "p.id", "v.preset_id")
    .select(["v.version", "v.spec", "v.corrects_versions", "v.correction_note", "p.name"])
    .where("v.preset_id", "=", presetId)
    .where("v.version", "=", version)
    .executeTakeFirst();
  if (!v)
    throw new AppError("not_found", 404, "No such preset version.", {
      correctingVersion: ["Unknown version."],
    });
  if (!v.corrects_versions.length || !v.correction_note)
    throw new AppError(
      "invalid",
      422,
      `Version ${version} of ${v.name} corrects no earlier version: a campaign starts from a correction.`,
      { correctingVersion: ["Not a correcting version."] },
    );
  return {
    presetId,
    presetName: v.name,
    version: v.version,
    spec: v.spec,
    corrects: v.corrects_versions,
    note: v.correction_note,
  };
}

type SideOutcome =
  | { state: "waiting"; choiceId: string; renderId: string }
  | { state: "done"; choiceId: string; outcome: string }
  | { state: "failed"; choiceId: string | null; error: string };

/**
 * One side's step of a campaign, inside its transaction (the side locked): a new curve
 * choice from the correcting version with the side's own overrides and speeds, its events
 * naming the campaign, and its render queued. A side whose render cannot be queued now
 * fails with the reason, for a retry.
 */
async function rechooseAndRender(
  trx: Transaction<Database>,
  actor: SessionUser,
  campaign: { id: string; title: string },
  fix: CorrectingVersion,
  side: LockedSide,
  lab: LabSettings,
): Promise<SideOutcome> {
  const busy = await trx
    .selectFrom("renders")
    .select("id")
    .where("side_id", "=", side.id)
    .where("status", "in", ["queued", "running"])
    .executeTakeFirst();
  if (busy)
    return {
      state: "failed",
      choiceId: null,
      error: "A render of this side was already queued or running; retry once it has finished.",
    };
  const old = await trx
    .selectFrom("curve_choices")
    .selectAll()
    .where("id", "=", side.current_curve_choice_id!)
    .executeTakeFirstOrThrow();
  const overrides = parseStored(storedCurveSpecSchema, old.overrides, {
    table: "curve_choices",
    id: old.id,
    column: "overrides",
  });
  const presetSpec = parseStored(storedCurveSpecSchema, fix.spec, {
    table: "curve_preset_versions",
    id: `${fix.presetId}/${fix.version}`,
    column: "spec",
  });
  const cutSpeedRpm = Number(old.cut_speed_rpm);
  const transferSpeedRpm = Number(old.transfer_speed_rpm);
  let spec;
  try {
    spec = checkCurveSpec(mergeCurve(presetSpec, overrides, cutSpeedRpm, transferSpeedRpm), "overrides");
  } catch (err) {
    return {
      state: "failed",
      choiceId: null,
      error: `The side's own overrides do not make a valid curve with version ${fix.version}: ${err instanceof Error ? err.message : String(err)}`,
    };
  }
  // A test-disc measurement the old choice rested on is evidence about the disc, not the
  // preset: the new choice keeps its points and file, fitted again from the corrected curve.
  const kept = await trx
    .selectFrom("curve_choice_evidence")
    .select(["points_kind", "points", "fit_parameters", "source_file_name", "source_text", "source_sha256"])
    .where("choice_id", "=", old.id)
    .executeTakeFirst();
  let measured: TestDiscEvidence | null = null;
  if (kept)
    try {
      measured = refitTestDiscEvidence(
        {
          pointsKind: kept.points_kind,
          points: kept.points,
          fitParameters: kept.fit_parameters as FitParameter[],
          sourceFileName: kept.source_file_name,
          sourceText: kept.source_text,
          sourceSha256: kept.source_sha256,
        },
        spec,
      );
    } catch (err) {
      return {
        state: "failed",
        choiceId: null,
        error: `The side's test-disc measurement cannot be fitted from version ${fix.version}: ${err instanceof Error ? err.message : String(err)}`,
      };
    }
  const specSha256 = sha256Hex(canonicalJson(spec));
  const rationale =
    `Re-render campaign "${campaign.title}": ${fix.presetName} version ${fix.version} corrects version ${old.preset_version}.` +
    ` Correction note: ${fix.note} The side's own corner overrides and speeds are kept.`;
  const row = await trx
    .insertInto("curve_choices")
    .values({
      side_id: side.id,
      preset_id: fix.presetId,
      preset_version: fix.version,
      preset_name: fix.presetName,
      preset_spec: JSON.stringify(presetSpec),
      overrides: JSON.stringify(overrides),
      spec: JSON.stringify(spec),
      spec_sha256: specSha256,
      cut_speed_rpm: cutSpeedRpm,
      transfer_speed_rpm: transferSpeedRpm,
      correct_speed: old.correct_speed,
      rationale,
      evidence_kind: old.evidence_kind,
      evidence: old.evidence,
      chosen_by: actor.id,
    })
    .returning("id")
    .executeTakeFirstOrThrow();
  if (measured) await insertTestDiscEvidence(trx, row.id, measured);
  const events: NewEvent[] = [
    {
      actorId: actor.id,
      kind: "side.curve_changed",
      subjectType: "side",
      subjectId: side.id,
      discId: side.disc_id,
      payload: {
        side: side.designation,
        choiceId: row.id,
        campaignId: campaign.id,
        preset: { id: fix.presetId, version: fix.version, name: fix.presetName, values: presetSpec },
        corrects: { version: old.preset_version, note: fix.note },
        overrides,
        cutSpeedRpm,
        transferSpeedRpm,
        correctSpeed: old.correct_speed,
        spec,
        specSha256,
        rationale,
        evidenceKind: old.evidence_kind,
        evidence: old.evidence,
        ...(measured ? { testDisc: evidenceSummary(measured) } : {}),
        before: { choiceId: old.id, spec: old.spec, presetVersion: old.preset_version, status: side.status },
      },
    },
  ];
  await campaignCurveChosen(trx, { id: actor.id, role: actor.role }, side, row.id, campaign.id, events);
  await appendEvents(trx, events);
  if (!side.current_transfer_id)
    return {
      state: "done",
      choiceId: row.id,
      outcome: "curve recorded; the side has no flat transfer yet, so there was nothing to render",
    };
  return queueCampaignRender(trx, actor, side, row.id, lab, { campaignId: campaign.id });
}

/**
 * Queues the side's render on the render queue every render goes through, with the channels,
 * word length and rate of its last access copy. A side the queue refuses now (not renderable,
 * a render already under way) fails with the queue's reason, for a retry: the refusals come
 * before anything is written, so the campaign's transaction goes on.
 */
async function queueCampaignRender(
  trx: Transaction<Database>,
  actor: SessionUser,
  side: LockedSide,
  choiceId: string,
  lab: LabSettings,
  extra: { campaignId: string; retry?: true },
): Promise<SideOutcome> {
  try {
    const { renderId } = await queueRender(
      trx,
      actor,
      side,
      { channelMode: "both", ...(await lastRenderSettings(trx, side.id)) },
      lab,
      extra,
    );
    return { state: "waiting", choiceId, renderId };
  } catch (err) {
    if (err instanceof AppError && (err.status === 409 || err.status === 422))
      return { state: "failed", choiceId, error: err.message };
    throw err;
  }
}

async function shelfMarks(trx: Transaction<Database>, sides: LockedSide[]): Promise<Map<string, string>> {
  const discIds = [...new Set(sides.map((s) => s.disc_id))];
  if (!discIds.length) return new Map();
  const rows = await trx
    .selectFrom("discs")
    .select(["id", "shelf_mark"])
    .where("id", "in", discIds)
    .execute();
  const byDisc = new Map(rows.map((d) => [d.id, d.shelf_mark]));
  return new Map(sides.map((s) => [s.id, `${byDisc.get(s.disc_id)} side ${s.designation}`]));
}

/**
 * Starts a campaign over sides whose current curve rests on a version the correcting
 * version corrects. All or nothing for what it is asked (a side that does not rest on a
 * corrected version, or is in another campaign still running, refuses the whole start);
 * a side whose render cannot be queued now is recorded as failed with the reason.
 */
export async function startCampaign(actor: SessionUser, input: unknown): Promise<{ campaignId: string }> {
  const c = startCampaignSchema.parse(input);
  const lab = await getSettings();
  return db.transaction().execute(async (trx) => {
    const fix = await correctingVersion(trx, c.presetId, c.correctingVersion);
    const sides = await lockSides(trx, c.sideIds);
    if (sides.length !== new Set(c.sideIds).size)
      throw new AppError("not_found", 404, "One of those sides does not exist.");
    const labels = await shelfMarks(trx, sides);
    const choiceIds = sides.map((s) => s.current_curve_choice_id).filter((id): id is string => !!id);
    const choices = new Map(
      (choiceIds.length
        ? await trx
            .selectFrom("curve_choices")
            .select(["id", "preset_id", "preset_version"])
            .where("id", "in", choiceIds)
            .execute()
        : []
      ).map((r) => [r.id, r]),
    );
    const wrong = sides.filter((s) => {
      const ch = s.current_curve_choice_id ? choices.get(s.current_curve_choice_id) : undefined;
      return !ch || ch.preset_id !== fix.presetId || !fix.corrects.includes(ch.preset_version ?? -1);
    });
    if (wrong.length)
      throw new AppError(
        "conflict",
        409,
        `${wrong.map((s) => labels.get(s.id)).join(", ")} ${wrong.length === 1 ? "does" : "do"} not rest on a version that version ${fix.version} corrects (${fix.corrects.map((v) => `v${v}`).join(", ")}).`,
      );
    const busy = await trx
      .selectFrom("campaign_sides")
      .select("side_id")
      .where(
        "side_id",
        "in",
        sides.map((s) => s.id),
      )
      .where("state", "=", "waiting")
      .execute();
    if (busy.length)
      throw new AppError(
        "conflict",
        409,
        `${busy.map((b) => labels.get(b.side_id)).join(", ")} ${busy.length === 1 ? "is" : "are"} already in a campaign that is still running.`,
      );
    const fromVersions = [
      ...new Set(sides.map((s) => choices.get(s.current_curve_choice_id!)!.preset_version!)),
    ].sort((a, b) => a - b);
    const title =
      c.title ||
      `${fix.presetName}: version ${fix.version} in place of ${fromVersions.map((v) => `v${v}`).join(", ")}`;
    const rationale = `${fix.presetName} version ${fix.version} corrects ${fix.corrects.map((v) => `version ${v}`).join(", ")}: ${fix.note}`;
    const campaign = await trx
      .insertInto("campaigns")
      .values({
        preset_id: fix.presetId,
        correcting_version: fix.version,
        title,
        rationale,
        started_by: actor.id,
      })
      .returning("id")
      .executeTakeFirstOrThrow();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "campaign.started",
      subjectType: "campaign",
      subjectId: campaign.id,
      payload: {
        campaignId: campaign.id,
        title,
        preset: { id: fix.presetId, name: fix.presetName },
        correctingVersion: fix.version,
        corrects: fix.corrects,
        correctionNote: fix.note,
        fromVersions,
        sideIds: sides.map((s) => s.id),
        sides: sides.length,
      },
    });
    const order = new Map(c.sideIds.map((id, i) => [id, i]));
    sides.sort((a, b) => order.get(a.id)! - order.get(b.id)!);
    for (const side of sides) {
      const fromChoice = choices.get(side.current_curve_choice_id!)!;
      const statusBefore = side.status;
      const out = await rechooseAndRender(trx, actor, { id: campaign.id, title }, fix, side, lab);
      await trx
        .insertInto("campaign_sides")
        .values({
          campaign_id: campaign.id,
          side_id: side.id,
          state: out.state,
          status_before: statusBefore,
          from_choice_id: fromChoice.id,
          choice_id: out.choiceId,
          render_id: out.state === "waiting" ? out.renderId : null,
          attempts: out.state === "waiting" ? 1 : 0,
          error: out.state === "failed" ? out.error : null,
          outcome: out.state === "done" ? out.outcome : null,
        })
        .execute();
    }
    await settleCampaign(trx, campaign.id);
    return { campaignId: campaign.id };
  });
}

async function lockedCampaign(trx: Transaction<Database>, id: string) {
  const campaign = await trx
    .selectFrom("campaigns")
    .select(["id", "title", "state", "cancelled_at", "preset_id", "correcting_version"])
    .where("id", "=", id)
    .forUpdate()
    .executeTakeFirst();
  if (!campaign) throw new AppError("not_found", 404, "No such campaign.");
  return campaign;
}

function campaignId(id: string): string {
  const parsed = uuid("campaign").safeParse(id);
  if (!parsed.success) throw new AppError("not_found", 404, "No such campaign.");
  return parsed.data;
}

/**
 * Cancels what has not started: each side whose render is still queued has it cancelled
 * (no worker will take it up) and is marked cancelled; renders already running finish
 * and their sides complete as usual. The new curve choices stay recorded: they are the
 * corrected curve; an engineer renders such a side from the bench.
 */
export async function cancelCampaign(actor: SessionUser, id: string) {
  const cid = campaignId(id);
  return db.transaction().execute(async (trx) => {
    // The lab's lock order: sides, renders, the campaign, then the log.
    const waiting = await trx
      .selectFrom("campaign_sides")
      .select(["side_id", "render_id"])
      .where("campaign_id", "=", cid)
      .where("state", "=", "waiting")
      .execute();
    const sides = await lockSides(
      trx,
      waiting.map((w) => w.side_id),
    );
    const renderIds = waiting.map((w) => w.render_id).filter((r): r is string => !!r);
    const queued = renderIds.length
      ? await trx
          .selectFrom("renders")
          .select(["id", "side_id", "status", "progress"])
          .where("id", "in", renderIds)
          .where("status", "=", "queued")
          .orderBy("id")
          .forUpdate()
          .execute()
      : [];
    const campaign = await lockedCampaign(trx, cid);
    if (campaign.state !== "running")
      throw new AppError("conflict", 409, "The campaign has finished: there is nothing left to cancel.");
    if (campaign.cancelled_at) throw new AppError("conflict", 409, "The campaign was cancelled already.");
    const bySide = new Map(sides.map((s) => [s.id, s]));
    const events: NewEvent[] = [];
    for (const r of queued) {
      await trx
        .updateTable("renders")
        .set({
          status: "cancelled",
          lease_owner: null,
          error: "Cancelled with its re-render campaign before it started.",
          finished_at: new Date(),
        })
        .where("id", "=", r.id)
        .execute();
      await trx
        .updateTable("campaign_sides")
        .set({ state: "cancelled", updated_at: sql<Date>`now()` })
        .where("campaign_id", "=", cid)
        .where("side_id", "=", r.side_id)
        .execute();
      const side = bySide.get(r.side_id)!;
      events.push({
        actorId: actor.id,
        kind: "side.render_cancelled",
        subjectType: "side",
        subjectId: side.id,
        discId: side.disc_id,
        payload: {
          side: side.designation,
          renderId: r.id,
          was: r.status,
          progress: r.progress,
          campaignId: cid,
        },
      });
    }
    await trx
      .updateTable("campaigns")
      .set({ cancelled_at: sql<Date>`now()`, cancelled_by: actor.id })
      .where("id", "=", cid)
      .execute();
    events.unshift({
      actorId: actor.id,
      kind: "campaign.cancelled",
      subjectType: "campaign",
      subjectId: cid,
      payload: {
        campaignId: cid,
        title: campaign.title,
        cancelledSides: queued.length,
        stillRendering: waiting.length - queued.length,
      },
    });
    await appendEvents(trx, events);
    await settleCampaign(trx, cid);
    return { cancelled: queued.length, stillRendering: waiting.length - queued.length };
  });
}

/**
 * Tries failed sides again (those named, or all): a side whose campaign choice is still
 * its current curve has its render queued again; one that never got its choice (its render
 * was busy) takes the whole step now. A side whose curve someone changed since stays
 * failed, with that reason. A finished campaign runs again until they settle.
 */
export async function retryCampaign(actor: SessionUser, id: string, input: unknown) {
  const cid = campaignId(id);
  const { sideIds } = retryCampaignSchema.parse(input ?? {});
  const lab = await getSettings();
  return db.transaction().execute(async (trx) => {
    let q = trx
      .selectFrom("campaign_sides")
      .select(["side_id", "choice_id", "state"])
      .where("campaign_id", "=", cid)
      .where("state", "=", "failed");
    if (sideIds)
      q = q.where("side_id", "in", sideIds.length ? sideIds : ["00000000-0000-0000-0000-000000000000"]);
    const failed = await q.execute();
    if (sideIds && failed.length !== new Set(sideIds).size)
      throw new AppError("conflict", 409, "Only failed sides of this campaign can be retried.");
    const sides = await lockSides(
      trx,
      failed.map((f) => f.side_id),
    );
    const campaign = await lockedCampaign(trx, cid);
    if (campaign.cancelled_at) throw new AppError("conflict", 409, "A cancelled campaign is not retried.");
    if (!failed.length) throw new AppError("conflict", 409, "No side of this campaign has failed.");
    const fix = await correctingVersion(trx, campaign.preset_id, campaign.correcting_version);
    const choiceOf = new Map(failed.map((f) => [f.side_id, f.choice_id]));
    const results: { sideId: string; state: CampaignSideState; error?: string }[] = [];
    for (const side of sides) {
      const choiceId = choiceOf.get(side.id) ?? null;
      let out: SideOutcome;
      const current = side.current_curve_choice_id
        ? await trx
            .selectFrom("curve_choices")
            .select(["preset_id", "preset_version"])
            .where("id", "=", side.current_curve_choice_id)
            .executeTakeFirst()
        : undefined;
      if (
        !choiceId &&
        (current?.preset_id !== fix.presetId || !fix.corrects.includes(current.preset_version ?? -1))
      ) {
        out = {
          state: "failed",
          choiceId: null,
          error:
            "Its curve was chosen again since, and no longer rests on a version this correction replaces.",
        };
      } else if (!choiceId) {
        out = await rechooseAndRender(trx, actor, campaign, fix, side, lab);
      } else if (side.current_curve_choice_id !== choiceId) {
        out = {
          state: "failed",
          choiceId,
          error:
            "Its curve was chosen again after the campaign's choice: the campaign leaves it to that choice.",
        };
      } else {
        out = await queueCampaignRender(trx, actor, side, choiceId, lab, { campaignId: cid, retry: true });
      }
      await trx
        .updateTable("campaign_sides")
        .set({
          state: out.state,
          choice_id: out.choiceId,
          ...(out.state === "waiting"
            ? { render_id: out.renderId, attempts: sql<number>`attempts + 1` }
            : {}),
          error: out.state === "failed" ? out.error : null,
          outcome: out.state === "done" ? out.outcome : null,
          updated_at: sql<Date>`now()`,
        })
        .where("campaign_id", "=", cid)
        .where("side_id", "=", side.id)
        .execute();
      results.push({
        sideId: side.id,
        state: out.state,
        ...(out.state === "failed" ? { error: out.error } : {}),
      });
    }
    if (campaign.state === "finished" && results.some((r) => r.state === "waiting"))
      await trx
        .updateTable("campaigns")
        .set({ state: "running", finished_at: null })
        .where("id", "=", cid)
        .execute();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "campaign.retried",
      subjectType: "campaign",
      subjectId: cid,
      payload: { campaignId: cid, title: campaign.title, sides: results },
    });
    await settleCampaign(trx, cid);
    return { retried: results.filter((r) => r.state === "waiting").length, sides: results };
  });
}

/** The channels, word length and rate of the side's last render that finished: a retry keeps them. */
async function lastRenderSettings(trx: Transaction<Database>, sideId: string) {
  const r = await trx
    .selectFrom("renders")
    .select(["channel_mode", "bit_depth", "sample_rate_hz"])
    .where("side_id", "=", sideId)
    .where("status", "=", "done")
    .orderBy("finished_at", "desc")
    .limit(1)
    .executeTakeFirst();
  return r
    ? { channelMode: r.channel_mode, bitDepth: r.bit_depth, sampleRateHz: r.sample_rate_hz ?? undefined }
    : {};
}

const campaignColumns = [
  "c.id",
  "c.title",
  "c.rationale",
  "c.state",
  "c.preset_id as presetId",
  "p.name as presetName",
  "c.correcting_version as correctingVersion",
  "c.started_at as startedAt",
  "c.finished_at as finishedAt",
  "c.cancelled_at as cancelledAt",
  "u.name as startedBy",
] as const;

function campaignsQuery() {
  return db
    .selectFrom("campaigns as c")
    .innerJoin("curve_presets as p", "p.id", "c.preset_id")
    .innerJoin("users as u", "u.id", "c.started_by")
    .leftJoin("campaign_sides as cs", "cs.campaign_id", "c.id")
    .select(campaignColumns)
    .select([
      sql<number>`count(cs.side_id)::int`.as("total"),
      sql<number>`(count(*) FILTER (WHERE cs.state = 'waiting'))::int`.as("waiting"),
      sql<number>`(count(*) FILTER (WHERE cs.state = 'done'))::int`.as("done"),
      sql<number>`(count(*) FILTER (WHERE cs.state = 'failed'))::int`.as("failed"),
      sql<number>`(count(*) FILTER (WHERE cs.state = 'cancelled'))::int`.as("cancelled"),
    ])
    .groupBy(["c.id", "p.name", "u.name"]);
}

export async function listCampaigns(opts: { presetId?: string } = {}) {
  let q = campaignsQuery();
  if (opts.presetId) q = q.where("c.preset_id", "=", opts.presetId);
  return q.orderBy("c.started_at", "desc").limit(200).execute();
}

/** A campaign with its progress and each side's state, reason and render. */
export async function getCampaign(id: string) {
  const cid = campaignId(id);
  const campaign = await campaignsQuery().where("c.id", "=", cid).executeTakeFirst();
  if (!campaign) throw new AppError("not_found", 404, "No such campaign.");
  const sides = await db
    .selectFrom("campaign_sides as cs")
    .innerJoin("sides as s", "s.id", "cs.side_id")
    .innerJoin("discs as d", "d.id", "s.disc_id")
    // The version the side rested on: its choice before the campaign's.
    .innerJoin("curve_choices as fc", "fc.id", "cs.from_choice_id")
    .leftJoin("renders as r", "r.id", "cs.render_id")
    .select([
      "cs.side_id as sideId",
      "cs.state",
      "cs.status_before as statusBefore",
      "fc.preset_version as fromVersion",
      "cs.choice_id as choiceId",
      "cs.render_id as renderId",
      "cs.attempts",
      "cs.error",
      "cs.outcome",
      "cs.updated_at as updatedAt",
      "s.designation",
      "s.title",
      "s.status",
      "d.id as discId",
      "d.shelf_mark as shelfMark",
      "r.status as renderStatus",
      "r.progress as renderProgress",
    ])
    .where("cs.campaign_id", "=", cid)
    .orderBy("d.shelf_mark")
    .orderBy("s.designation")
    .execute();
  const rendering = sides.filter((s) => s.state === "waiting" && s.renderStatus === "running").length;
  return { campaign: { ...campaign, rendering }, sides };
}

/**
 * The sides whose current curve choice rests on each version of a preset, with where each
 * stands, counts per version, and which later versions correct each version.
 */
export async function presetUses(presetId: string) {
  const parsed = uuid("preset").safeParse(presetId);
  if (!parsed.success) throw new AppError("not_found", 404, "No such preset.");
  const preset = await db
    .selectFrom("curve_presets")
    .select(["id", "name", "current_version as currentVersion"])
    .where("id", "=", parsed.data)
    .executeTakeFirst();
  if (!preset) throw new AppError("not_found", 404, "No such preset.");
  const versions = await db
    .selectFrom("curve_preset_versions")
    .select([
      "version",
      "change_note as changeNote",
      "created_at as createdAt",
      "corrects_versions as correctsVersions",
      "correction_note as correctionNote",
    ])
    .where("preset_id", "=", preset.id)
    .orderBy("version", "desc")
    .execute();
  const rows = await db
    .selectFrom("sides as s")
    .innerJoin("curve_choices as c", "c.id", "s.current_curve_choice_id")
    .innerJoin("discs as d", "d.id", "s.disc_id")
    .leftJoin("users as u", "u.id", "s.assigned_engineer_id")
    .leftJoin("campaign_sides as cs", (j) =>
      j.onRef("cs.side_id", "=", "s.id").on("cs.state", "=", "waiting"),
    )
    .select([
      "s.id as sideId",
      "s.designation",
      "s.title",
      "s.status",
      "d.id as discId",
      "d.shelf_mark as shelfMark",
      "d.label_name as labelName",
      "d.catalogue_number as catalogueNumber",
      "c.preset_version as version",
      "c.id as choiceId",
      "c.chosen_at as chosenAt",
      "u.name as engineerName",
      "cs.campaign_id as runningCampaignId",
    ])
    .where("c.preset_id", "=", preset.id)
    .orderBy("d.shelf_mark")
    .orderBy("s.designation")
    .execute();
  const sides = rows.map((r) => ({ ...r, version: r.version!, state: useState(r.status) }));
  return {
    preset,
    versions: versions.map((v) => {
      const mine = sides.filter((s) => s.version === v.version);
      return {
        ...v,
        correctedBy: versions
          .filter((w) => w.correctsVersions.includes(v.version))
          .map((w) => w.version)
          .sort((a, b) => a - b),
        counts: {
          total: mine.length,
          chosen: mine.filter((s) => s.state === "chosen").length,
          rendered: mine.filter((s) => s.state === "rendered").length,
          in_review: mine.filter((s) => s.state === "in_review").length,
          approved: mine.filter((s) => s.state === "approved").length,
        },
      };
    }),
    sides,
  };
}

export { campaignCounts };
