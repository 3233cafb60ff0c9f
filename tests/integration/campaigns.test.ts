// Re-render campaigns: a preset version is corrected, the uses list names the sides that
// rest on the wrong one, a campaign re-chooses their curve from the correction (keeping
// each side's overrides), renders them through the render queue and sends finished work
// back to review; cancel, retry, the curators' mail, the database's refusals, and who may.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { type CurveSpec, fitCurve, type FitParameter, resolveCurve } from "@/lib/curves";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { api, signInCookie, waitForMail } from "../support/app";
import { ownerDb, testDb } from "../support/db";
import {
  assignedDisc,
  fixityNow,
  flatTransfer,
  labCookies,
  type LabCookies,
  renderAndWait,
  until,
  uploadTransfer,
} from "../support/pipeline";
import { runPython } from "../support/python";

let c: LabCookies;
let admin: string;
const tag = Date.now().toString(36);

const spec = (turnoverHz: number) => ({
  turnover: { unit: "hz", value: turnoverHz },
  shelf: { unit: "hz", value: 50 },
  rolloff: { unit: "db10k", value: 10 },
  reference: { hz: 1000, db: 0 },
  speedRatio: 1,
});
/** Each side's own override: the rolloff its engineer heard, kept through the correction. */
const overrides = { rolloff: { unit: "db10k", value: 13.7 } };

async function newPreset(name: string): Promise<string> {
  const res = await api("/api/curves/presets", {
    cookie: c.engineer,
    method: "POST",
    body: { name, spec: spec(500), changeNote: "As first published in the label's leaflet" },
  });
  expect(res.status).toBe(201);
  return res.body.preset.id as string;
}

async function correct(presetId: string, turnoverHz: number, corrects: number[]) {
  const res = await api(`/api/curves/presets/${presetId}`, {
    cookie: c.engineer,
    method: "PATCH",
    body: {
      spec: spec(turnoverHz),
      changeNote: "Turnover re-measured",
      corrects,
      correctionNote: "The leaflet's 500 Hz was a misprint: three test-disc bands of the series give 350 Hz.",
    },
  });
  expect(res.status).toBe(200);
  return res.body.preset;
}

/** The engineer's choice of the preset's version 1 (the file's overrides, at 78 rpm) for these sides. */
async function chooseVersionOne(sideIds: string[], presetId: string, evidence: Record<string, unknown>) {
  const chosen = await api("/api/curve-choices", {
    cookie: c.engineer,
    method: "POST",
    body: {
      sideIds,
      presetId,
      presetVersion: 1,
      overrides,
      cutSpeedRpm: 78,
      transferSpeedRpm: 78,
      ...evidence,
    },
  });
  expect(chosen.status).toBe(201);
  return chosen;
}

/** Sides with a transfer and a curve from the preset's version 1, each rendered. */
async function renderedSides(shelfMark: string, designations: string[], presetId: string) {
  const { discId, sideIds } = await assignedDisc(c, shelfMark, designations);
  await chooseVersionOne(sideIds, presetId, {
    rationale: "The label's leaflet for the series.",
    evidenceKind: "disc_documentation",
  });
  for (const [i, sideId] of sideIds.entries()) {
    const up = await uploadTransfer(c, sideId, flatTransfer(1, 21 + i), `${shelfMark}-${i}.wav`);
    expect(up.done.status).toBe(201);
    await renderAndWait(c, sideId);
  }
  return { discId, sideIds };
}

const side = (id: string) =>
  testDb
    .selectFrom("sides")
    .select(["status", "current_curve_choice_id", "current_render_id"])
    .where("id", "=", id)
    .executeTakeFirstOrThrow();

const toReview = (sideId: string) =>
  api(`/api/sides/${sideId}/transition`, { cookie: c.engineer, method: "POST", body: { to: "in_review" } });

beforeAll(async () => {
  c = await labCookies();
  const a = demoAccounts.find((x) => x.role === "admin")!;
  admin = await signInCookie(a.email, a.password);
});

afterAll(async () => {
  await testDb.destroy();
  await ownerDb.destroy();
});

describe("a correcting preset version", () => {
  it("needs its note, and names only earlier versions of its own preset (the API and the database refuse others)", async () => {
    const presetId = await newPreset(`Correction rules ${tag}`);
    const noNote = await api(`/api/curves/presets/${presetId}`, {
      cookie: c.engineer,
      method: "PATCH",
      body: { spec: spec(350), changeNote: "Re-measured", corrects: [1] },
    });
    expect(noNote.status).toBe(422);
    expect(noNote.body.error.fields.correctionNote).toBeTruthy();
    const later = await api(`/api/curves/presets/${presetId}`, {
      cookie: c.engineer,
      method: "PATCH",
      body: {
        spec: spec(350),
        changeNote: "Re-measured",
        corrects: [2],
        correctionNote: "A long enough note.",
      },
    });
    expect(later.status).toBe(422);
    expect(later.body.error.fields.corrects).toBeTruthy();

    // The database holds the same rules whatever writes to it.
    const base = {
      preset_id: presetId,
      name: "x",
      spec: JSON.stringify(spec(350)),
      change_note: "direct",
    };
    await expect(
      testDb
        .insertInto("curve_preset_versions")
        .values({ ...base, version: 2, corrects_versions: [1], correction_note: null })
        .execute(),
    ).rejects.toThrow(/curve_preset_versions_correction_note/);
    await expect(
      testDb
        .insertInto("curve_preset_versions")
        .values({ ...base, version: 2, corrects_versions: [3], correction_note: "Corrects a later version?" })
        .execute(),
    ).rejects.toThrow(/curve_preset_versions_corrects_earlier/);
    await expect(
      testDb
        .insertInto("curve_preset_versions")
        .values({ ...base, version: 2, corrects_versions: [2], correction_note: "Corrects itself? Refused." })
        .execute(),
    ).rejects.toThrow(/curve_preset_versions_corrects_earlier/);
    // The corrected versions are numbers of the row's own preset: version 1 of another preset
    // cannot be named, and a version that preset never had is refused as a later one.
    await expect(
      testDb
        .insertInto("curve_preset_versions")
        .values({
          ...base,
          version: 2,
          corrects_versions: [0],
          correction_note: "Version zero does not exist.",
        })
        .execute(),
    ).rejects.toThrow(/curve_preset_versions_corrects_earlier/);

    const v2 = await correct(presetId, 350, [1]);
    expect(v2.currentVersion).toBe(2);
    const versions = await api(`/api/curves/presets/${presetId}/versions`, { cookie: c.curator });
    expect(versions.body.versions[0]).toMatchObject({ version: 2, correctsVersions: [1] });
    expect(versions.body.versions[0].correctionNote).toMatch(/misprint/);
    // Immutable like every version.
    await expect(
      testDb
        .updateTable("curve_preset_versions")
        .set({ change_note: "rewritten" } as never)
        .where("preset_id", "=", presetId)
        .execute(),
    ).rejects.toThrow();
  });
});

describe("a re-render campaign", () => {
  it("takes the sides the uses list names to review with renders made from the corrected curve, naming the campaign at every step", async () => {
    const presetId = await newPreset(`Campaign house curve ${tag}`);
    const { discId, sideIds } = await renderedSides(`CAMP-${tag}`, ["A", "B", "C"], presetId);
    const [approvedId, reviewId, renderedId] = sideIds;
    expect((await toReview(approvedId)).status).toBe(200);
    expect((await toReview(reviewId)).status).toBe(200);
    await fixityNow(c, discId, sideIds);
    const ok = await api(`/api/sides/${approvedId}/review`, {
      cookie: c.curator,
      method: "POST",
      body: { decision: "approved" },
    });
    expect(ok.status).toBe(200);
    const before = await Promise.all(sideIds.map(side));

    await correct(presetId, 350, [1]);
    const uses = await api(`/api/curves/presets/${presetId}/uses`, { cookie: c.archivist });
    expect(uses.status).toBe(200);
    const v1 = uses.body.versions.find((v: { version: number }) => v.version === 1);
    expect(v1).toMatchObject({
      correctedBy: [2],
      counts: { total: 3, chosen: 0, rendered: 1, in_review: 1, approved: 1 },
    });
    expect(
      uses.body.sides
        .filter((s: { version: number }) => s.version === 1)
        .map((s: { sideId: string; state: string }) => [s.sideId, s.state])
        .sort(),
    ).toEqual(
      [
        [approvedId, "approved"],
        [reviewId, "in_review"],
        [renderedId, "rendered"],
      ].sort(),
    );

    const started = await api("/api/campaigns", {
      cookie: c.curator,
      method: "POST",
      body: { presetId, correctingVersion: 2, sideIds },
    });
    expect(started.status).toBe(201);
    const campaignId = started.body.campaignId as string;
    // A side is in one running campaign at a time.
    const twice = await api("/api/campaigns", {
      cookie: c.engineer,
      method: "POST",
      body: { presetId, correctingVersion: 2, sideIds: [approvedId] },
    });
    expect(twice.status).toBe(409);

    const finished = await until(
      "the campaign to finish",
      async () => {
        const r = await api(`/api/campaigns/${campaignId}`, { cookie: c.archivist });
        return r.body.campaign.state === "finished" ? r.body : undefined;
      },
      120_000,
    );
    expect(finished.campaign).toMatchObject({ total: 3, done: 3, failed: 0, cancelled: 0, waiting: 0 });

    for (const [i, sideId] of sideIds.entries()) {
      const now = await side(sideId);
      expect(now.status).toBe("in_review");
      expect(now.current_render_id).not.toBe(before[i].current_render_id);
      const choice = await testDb
        .selectFrom("curve_choices")
        .selectAll()
        .where("id", "=", now.current_curve_choice_id!)
        .executeTakeFirstOrThrow();
      expect(choice.preset_version).toBe(2);
      expect(choice.overrides).toEqual(overrides);
      expect((choice.spec as { turnover: { value: number } }).turnover.value).toBe(350);
      expect((choice.spec as { rolloff: { value: number } }).rolloff.value).toBe(13.7);
      expect(choice.rationale).toMatch(/version 2 corrects version 1.*misprint/);
      // The render recorded the corrected curve it was made from.
      const render = await testDb
        .selectFrom("renders")
        .select(["status", "curve_choice_id", "filter"])
        .where("id", "=", now.current_render_id!)
        .executeTakeFirstOrThrow();
      expect(render.status).toBe("done");
      expect(render.curve_choice_id).toBe(choice.id);
      expect(render.filter!.spec).toEqual(choice.spec);
      // Every step names the campaign: the choice, the render asked and made, the return to review.
      const events = await testDb
        .selectFrom("provenance_events")
        .select(["kind", "payload"])
        .where("subject_id", "=", sideId)
        .where(
          (eb) => eb.fn("jsonb_extract_path_text", [eb.ref("payload"), eb.val("campaignId")]),
          "=",
          campaignId,
        )
        .orderBy("seq")
        .execute();
      const kinds = events.map((e) => e.kind);
      expect(kinds).toEqual(
        expect.arrayContaining(["side.curve_changed", "side.render_requested", "side.rendered"]),
      );
      const statusSteps = events
        .filter((e) => e.kind === "side.status_changed")
        .map((e) => (e.payload as { after: { status: string } }).after.status);
      expect(statusSteps).toEqual(["curve_chosen", "rendered", "in_review"]);
    }
    const campaignEvents = await testDb
      .selectFrom("provenance_events")
      .select("kind")
      .where("subject_id", "=", campaignId)
      .orderBy("seq")
      .execute();
    expect(campaignEvents.map((e) => e.kind)).toEqual(["campaign.started", "campaign.finished"]);

    // The four-eyes rule as usual: the curator who started the campaign chose these curves.
    const own = await api(`/api/sides/${approvedId}/review`, {
      cookie: c.curator,
      method: "POST",
      body: { decision: "approved" },
    });
    expect(own.status).toBe(403);

    // The curators are told once.
    const mail = await waitForMail(
      (m) => m.to === "della.prior@marrowhill.example" && m.text.includes(`/campaigns/${campaignId}`),
    );
    expect(mail.subject).toMatch(/Re-render campaign finished/);
    expect(mail.text).toMatch(/3 sides: 3 done, 0 failed, 0 cancelled/);
    const mails = await testDb
      .selectFrom("outbox")
      .select("id")
      .where("body_text", "like", `%/campaigns/${campaignId}%`)
      .execute();
    const curators = await testDb
      .selectFrom("users")
      .select("id")
      .where("role", "=", "curator")
      .where("active", "=", true)
      .execute();
    expect(mails).toHaveLength(curators.length);

    // The uses list now puts them on version 2.
    const after = await api(`/api/curves/presets/${presetId}/uses`, { cookie: c.engineer });
    expect(after.body.versions.find((v: { version: number }) => v.version === 1).counts.total).toBe(0);
    expect(after.body.versions.find((v: { version: number }) => v.version === 2).counts.in_review).toBe(3);
  }, 300_000);

  it("records a side it cannot render now as failed with the reason, and a retry finishes it", async () => {
    const presetId = await newPreset(`Campaign retry ${tag}`);
    const { sideIds } = await renderedSides(`RETRY-${tag}`, ["A", "B"], presetId);
    await correct(presetId, 350, [1]);
    // Side B has a render of its own queued (written straight in, so no worker takes it).
    const b = await testDb
      .selectFrom("sides")
      .select(["current_transfer_id", "current_curve_choice_id"])
      .where("id", "=", sideIds[1])
      .executeTakeFirstOrThrow();
    const engineerId = (
      await testDb
        .selectFrom("users")
        .select("id")
        .where("email", "=", "wen.okafor@marrowhill.example")
        .executeTakeFirstOrThrow()
    ).id;
    const blocker = await testDb
      .insertInto("renders")
      .values({
        side_id: sideIds[1],
        transfer_id: b.current_transfer_id!,
        curve_choice_id: b.current_curve_choice_id!,
        channel_mode: "both",
        bit_depth: 24,
        requested_by: engineerId,
      })
      .returning("id")
      .executeTakeFirstOrThrow();

    const started = await api("/api/campaigns", {
      cookie: c.engineer,
      method: "POST",
      body: { presetId, correctingVersion: 2, sideIds, title: `Retry drill ${tag}` },
    });
    expect(started.status).toBe(201);
    const id = started.body.campaignId as string;
    const first = await until("the campaign to finish", async () => {
      const r = await api(`/api/campaigns/${id}`, { cookie: c.curator });
      return r.body.campaign.state === "finished" ? r.body : undefined;
    });
    expect(first.campaign).toMatchObject({ title: `Retry drill ${tag}`, done: 1, failed: 1 });
    const failed = first.sides.find((s: { sideId: string }) => s.sideId === sideIds[1]);
    expect(failed).toMatchObject({ state: "failed", choiceId: null });
    expect(failed.error).toMatch(/already queued or running/);
    // Side A had been rendered: its new access copy goes to review, as finished work.
    expect(first.sides.find((s: { sideId: string }) => s.sideId === sideIds[0]).outcome).toMatch(
      /sent back to review/,
    );

    // The engineer cancels the stray render on the bench; then the retry goes through.
    expect(
      (await api(`/api/renders/${blocker.id}/cancel`, { cookie: c.engineer, method: "POST" })).status,
    ).toBe(200);
    const notFailed = await api(`/api/campaigns/${id}/retry`, {
      cookie: c.engineer,
      method: "POST",
      body: { sideIds: [sideIds[0]] },
    });
    expect(notFailed.status).toBe(409);
    const retried = await api(`/api/campaigns/${id}/retry`, { cookie: c.curator, method: "POST", body: {} });
    expect(retried.status).toBe(200);
    expect(retried.body.retried).toBe(1);
    const second = await until("the retried side", async () => {
      const r = await api(`/api/campaigns/${id}`, { cookie: c.curator });
      return r.body.campaign.state === "finished" ? r.body : undefined;
    });
    expect(second.campaign).toMatchObject({ done: 2, failed: 0 });
    const s = await side(sideIds[1]);
    const choice = await testDb
      .selectFrom("curve_choices")
      .select(["preset_version"])
      .where("id", "=", s.current_curve_choice_id!)
      .executeTakeFirstOrThrow();
    expect(choice.preset_version).toBe(2);
    expect(s.status).toBe("in_review");
    // Mailed once, at the first finish.
    expect(
      await testDb.selectFrom("campaigns").select("mailed_at").where("id", "=", id).executeTakeFirstOrThrow(),
    ).toMatchObject({ mailed_at: expect.any(Date) });
    const mails = await testDb
      .selectFrom("outbox")
      .select("id")
      .where("body_text", "like", `%/campaigns/${id}%`)
      .where("to_address", "=", "della.prior@marrowhill.example")
      .execute();
    expect(mails).toHaveLength(1);
  }, 180_000);

  it("cancels the renders that have not started; the sides it reached finish, and the campaign still finishes", async () => {
    const presetId = await newPreset(`Campaign cancel ${tag}`);
    const { sideIds } = await renderedSides(`CANCEL-${tag}`, ["A", "B", "C", "D"], presetId);
    await correct(presetId, 350, [1]);
    const started = await api("/api/campaigns", {
      cookie: c.engineer,
      method: "POST",
      body: { presetId, correctingVersion: 2, sideIds },
    });
    expect(started.status).toBe(201);
    const id = started.body.campaignId as string;
    const cancelled = await api(`/api/campaigns/${id}/cancel`, { cookie: c.curator, method: "POST" });
    expect(cancelled.status).toBe(200);
    // One worker takes one render at a time: most were still queued.
    expect(cancelled.body.cancelled).toBeGreaterThanOrEqual(2);
    expect(cancelled.body.cancelled + cancelled.body.stillRendering).toBeLessThanOrEqual(4);
    const again = await api(`/api/campaigns/${id}/cancel`, { cookie: c.curator, method: "POST" });
    expect(again.status).toBe(409);
    const done = await until("the cancelled campaign to finish", async () => {
      const r = await api(`/api/campaigns/${id}`, { cookie: c.curator });
      return r.body.campaign.state === "finished" ? r.body : undefined;
    });
    expect(done.campaign.cancelled).toBe(cancelled.body.cancelled);
    expect(done.campaign.done + done.campaign.cancelled).toBe(4);
    expect(done.campaign.cancelledAt).toBeTruthy();
    for (const s of done.sides.filter((x: { state: string }) => x.state === "cancelled")) {
      expect(s.renderStatus).toBe("cancelled");
      // The corrected curve stays recorded; the side waits for a render from the bench.
      expect((await side(s.sideId)).status).toBe("curve_chosen");
    }
    const retry = await api(`/api/campaigns/${id}/retry`, { cookie: c.curator, method: "POST", body: {} });
    expect(retry.status).toBe(409);
  }, 180_000);
});

describe("a campaign over a side that rests on a test-disc measurement", () => {
  it("keeps the measurement's points and file with the new choice, fitted again from the corrected curve", async () => {
    const presetId = await newPreset(`Campaign test disc ${tag}`);
    // A measured playback curve: RIAA from its IEC 60098 time constants by scipy, 1.5 dB up.
    const hz = [30, 50, 100, 200, 300, 500, 700, 1000, 2000, 3000, 5000, 7000, 10_000, 14_000];
    const { db } = await runPython<{ db: number[] }>("riaa_table.py", { hz });
    const pointsFile = [
      "hz,db",
      "# house test disc",
      ...hz.map((f, i) => `${f},${(db[i] + 1.5).toFixed(3)}`),
    ].join("\n");
    // The engineer fitted the treble and the level; the bass corners are the preset's.
    const fit: FitParameter[] = ["rolloff", "levelOffset"];
    const { sideIds } = await assignedDisc(c, `TDCAMP-${tag}`, ["A"]);
    const [sideId] = sideIds;
    const chosen = await chooseVersionOne(sideIds, presetId, {
      rationale: "The house test disc, measured on the chain.",
      evidenceKind: "test_disc",
      measurement: { pointsKind: "playback", fit, sourceText: pointsFile, sourceFileName: "house-disc.csv" },
    });
    const oldChoiceId = chosen.body.choices[0].choiceId as string;
    const up = await uploadTransfer(c, sideId, flatTransfer(1, 31), `TDCAMP-${tag}.wav`);
    expect(up.done.status).toBe(201);
    await renderAndWait(c, sideId);
    const evidence = (choiceId: string) =>
      testDb
        .selectFrom("curve_choice_evidence")
        .selectAll()
        .where("choice_id", "=", choiceId)
        .executeTakeFirstOrThrow();
    const before = await evidence(oldChoiceId);

    await correct(presetId, 350, [1]);
    const started = await api("/api/campaigns", {
      cookie: c.engineer,
      method: "POST",
      body: { presetId, correctingVersion: 2, sideIds },
    });
    expect(started.status).toBe(201);
    const campaignId = started.body.campaignId as string;
    const finished = await until("the campaign to finish", async () => {
      const r = await api(`/api/campaigns/${campaignId}`, { cookie: c.curator });
      return r.body.campaign.state === "finished" ? r.body : undefined;
    });
    expect(finished.campaign).toMatchObject({ done: 1, failed: 0 });

    const now = await side(sideId);
    expect(now.status).toBe("in_review");
    const choice = await testDb
      .selectFrom("curve_choices")
      .select(["id", "spec", "evidence_kind"])
      .where("id", "=", now.current_curve_choice_id!)
      .executeTakeFirstOrThrow();
    expect(choice.id).not.toBe(oldChoiceId);
    expect(choice.evidence_kind).toBe("test_disc");
    const after = await evidence(choice.id);
    // The measurement itself is the same: its points, its file and its hash, what was fitted.
    expect(after.points).toEqual(before.points);
    expect(after.points_kind).toBe("playback");
    expect(after.fit_parameters).toEqual(fit);
    expect(after.source_text).toBe(pointsFile);
    expect(after.source_sha256).toBe(before.source_sha256);
    expect(after.source_file_name).toBe("house-disc.csv");
    // The fit starts from the corrected curve: the turnover it leaves alone is version 2's
    // 350 Hz, not version 1's 500 Hz that the old choice's fit carried.
    const tau = (s: unknown) => resolveCurve(s as CurveSpec).turnover!.tauUs;
    expect(tau(before.fitted_spec)).toBeCloseTo(1e6 / (2 * Math.PI * 500), 3);
    expect(tau(after.fitted_spec)).toBeCloseTo(tau(choice.spec), 6);
    expect(tau(after.fitted_spec)).toBeCloseTo(1e6 / (2 * Math.PI * 350), 3);
    // Its figures are the curve engine's fit of the kept points from the new choice's curve,
    // and they say how far the measured bass now lies from the corrected curve.
    const { speedRatio: _speed, ...initial } = choice.spec;
    const expected = fitCurve({ points: before.points, kind: "playback", fit, initial });
    expect(after.rms_db).toBeCloseTo(expected.rmsDb, 6);
    expect(after.level_offset_db).toBeCloseTo(expected.levelOffsetDb, 6);
    expect(after.residuals).toHaveLength(hz.length);
    expect(after.rms_db).toBeGreaterThan(before.rms_db + 0.5);

    // The campaign's curve event names the measurement, and the reviewer sees it with the choice.
    const event = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("subject_id", "=", sideId)
      .where("kind", "=", "side.curve_changed")
      .orderBy("seq", "desc")
      .executeTakeFirstOrThrow();
    expect(event.payload).toMatchObject({
      campaignId,
      choiceId: choice.id,
      testDisc: { sourceSha256: before.source_sha256, pointCount: hz.length },
    });
    const list = await api(`/api/sides/${sideId}/curve-choices`, { cookie: c.curator });
    const shown = list.body.choices.find((x: { id: string }) => x.id === choice.id);
    expect(shown.measurement).toMatchObject({ fitParameters: fit, sourceSha256: before.source_sha256 });
    expect(shown.measurement.rmsDb).toBeCloseTo(after.rms_db, 6);
  }, 180_000);
});

describe("who may run campaigns", () => {
  it("lets curators and engineers start, cancel and retry; every role may read the uses and the campaigns", async () => {
    const presetId = await newPreset(`Campaign roles ${tag}`);
    await correct(presetId, 350, [1]);
    const { sideIds } = await assignedDisc(c, `ROLES-${tag}`, ["A"]);
    const body = { presetId, correctingVersion: 2, sideIds };
    expect((await api("/api/campaigns", { cookie: c.archivist, method: "POST", body })).status).toBe(403);
    expect((await api("/api/campaigns", { cookie: admin, method: "POST", body })).status).toBe(403);
    // Allowed, but the side has no curve from that preset: refused for what it is, not for who asks.
    const engineer = await api("/api/campaigns", { cookie: c.engineer, method: "POST", body });
    expect(engineer.status).toBe(409);
    expect(engineer.body.error.message).toMatch(/does not rest on a version that version 2 corrects/);
    const fromV1 = await api("/api/campaigns", {
      cookie: c.curator,
      method: "POST",
      body: { ...body, correctingVersion: 1 },
    });
    expect(fromV1.status).toBe(422);
    for (const cookie of [c.archivist, admin, c.engineer, c.curator]) {
      expect((await api(`/api/curves/presets/${presetId}/uses`, { cookie })).status).toBe(200);
      expect((await api(`/api/campaigns?presetId=${presetId}`, { cookie })).status).toBe(200);
    }
    for (const path of ["cancel", "retry"]) {
      const url = `/api/campaigns/00000000-0000-4000-8000-000000000000/${path}`;
      expect((await api(url, { cookie: c.archivist, method: "POST", body: {} })).status).toBe(403);
      expect((await api(url, { cookie: c.engineer, method: "POST", body: {} })).status).toBe(404);
    }
  });
});
