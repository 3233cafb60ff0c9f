// One side lifecycle: what a curator approves is exactly what was made. Each path that
// could leave a stale access copy, against the running app, worker, PostgreSQL and s3rver,
// and the database's own refusal of a review that binds mismatched work.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { runRenderJob } from "@/lib/jobs/render-job";
import { transitions } from "@/lib/sides/lifecycle";
import { api } from "../support/app";
import { testDb } from "../support/db";
import {
  assignedDisc,
  chooseCurve,
  fixityNow,
  flatTransfer,
  type LabCookies,
  labCookies,
  renderAndWait,
  uploadTransfer,
} from "../support/pipeline";

const tag = Date.now().toString(36).toUpperCase();
let c: LabCookies;
let engineerId: string;

beforeAll(async () => {
  c = await labCookies();
  engineerId = (
    await testDb
      .selectFrom("users")
      .select("id")
      .where("email", "=", demoAccounts.find((a) => a.role === "engineer")!.email)
      .executeTakeFirstOrThrow()
  ).id;
});

afterAll(async () => {
  await testDb.destroy();
});

const sideRow = (id: string) =>
  testDb
    .selectFrom("sides")
    .select(["status", "current_transfer_id", "current_curve_choice_id", "current_render_id"])
    .where("id", "=", id)
    .executeTakeFirstOrThrow();
const renderRow = (id: string) =>
  testDb
    .selectFrom("renders")
    .select([
      "status",
      "transfer_id",
      "curve_choice_id",
      "superseded_at",
      "superseded_reason",
      "sha256",
      "object_key",
    ])
    .where("id", "=", id)
    .executeTakeFirstOrThrow();
const submit = (sideId: string) =>
  api(`/api/sides/${sideId}/transition`, { cookie: c.engineer, method: "POST", body: { to: "in_review" } });
const rolloff = (us: number) => ({
  turnover: { unit: "us", value: 318 },
  shelf: { unit: "us", value: 3180 },
  rolloff: { unit: "us", value: us },
});

/** A render row as the bench would queue it, but run here, so the test decides when it finishes. */
async function queueRenderByHand(sideId: string): Promise<string> {
  const side = await sideRow(sideId);
  const row = await testDb
    .insertInto("renders")
    .values({
      side_id: sideId,
      transfer_id: side.current_transfer_id!,
      curve_choice_id: side.current_curve_choice_id!,
      channel_mode: "sum",
      bit_depth: 24,
      sample_rate_hz: 44_100,
      requested_by: engineerId,
    })
    .returning("id")
    .executeTakeFirstOrThrow();
  return row.id;
}

describe("the order of the work", () => {
  it("takes the flat transfer first, then the curve, and only then a render", async () => {
    const { sideIds } = await assignedDisc(c, `LC-${tag}-1`, ["A"]);
    const [sideId] = sideIds;
    expect(
      (
        await api("/api/renders", {
          cookie: c.engineer,
          method: "POST",
          body: { sideId, channelMode: "sum" },
        })
      ).status,
    ).toBe(409);
    const up = await uploadTransfer(c, sideId, flatTransfer(1, 3), "flat.wav");
    expect(up.done.status).toBe(201);
    expect((await sideRow(sideId)).status).toBe("transferred");
    // A render needs the curve.
    expect(
      (
        await api("/api/renders", {
          cookie: c.engineer,
          method: "POST",
          body: { sideId, channelMode: "sum" },
        })
      ).status,
    ).toBe(409);
    await chooseCurve(c, [sideId]);
    const side = await sideRow(sideId);
    expect(side.status).toBe("curve_chosen");
    expect(side.current_transfer_id).toBe(up.done.body.transferId);
    const r = await renderAndWait(c, sideId);
    expect(await sideRow(sideId)).toMatchObject({ status: "rendered", current_render_id: r.id });
    // The status events read in the archive's order.
    const steps = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("subject_id", "=", sideId)
      .where("kind", "=", "side.status_changed")
      .orderBy("seq")
      .execute();
    expect(steps.map((e) => (e.payload as { after: { status: string } }).after.status)).toEqual([
      "transferred",
      "curve_chosen",
      "rendered",
    ]);
  }, 120_000);
});

describe("a stale access copy cannot be approved", () => {
  it("a new flat transfer after a render supersedes the render and sends the side back to be rendered", async () => {
    const { discId, sideIds } = await assignedDisc(c, `LC-${tag}-2`, ["A"]);
    const [sideId] = sideIds;
    const a = await uploadTransfer(c, sideId, flatTransfer(1, 21), "a.wav");
    await chooseCurve(c, [sideId]);
    const first = await renderAndWait(c, sideId);

    const b = await uploadTransfer(c, sideId, flatTransfer(1, 22), "b.wav");
    expect(b.done.status).toBe(201);
    expect(await sideRow(sideId)).toMatchObject({
      status: "curve_chosen",
      current_transfer_id: b.done.body.transferId,
      current_render_id: null,
    });
    const old = await renderRow(first.id);
    expect(old.superseded_at).not.toBeNull();
    expect(old.superseded_reason).toMatch(/new flat transfer/);
    // The superseded copy keeps its file and hash, and says what it is.
    expect(old.object_key).toBeTruthy();
    expect(old.sha256).toBe(first.sha256);
    const listed = (await api(`/api/sides/${sideId}/renders`, { cookie: c.curator })).body.renders.find(
      (x: { id: string }) => x.id === first.id,
    );
    expect(listed).toMatchObject({ current: false });
    expect(listed.supersededAt).toBeTruthy();

    // Nothing current to review.
    const early = await submit(sideId);
    expect(early.status).toBe(409);
    expect(early.body.error.message).toMatch(/render/);

    const second = await renderAndWait(c, sideId);
    expect(second.id).not.toBe(first.id);
    expect(await sideRow(sideId)).toMatchObject({ status: "rendered", current_render_id: second.id });
    expect((await submit(sideId)).status).toBe(200);
    await fixityNow(c, discId, sideIds);
    const ok = await api(`/api/sides/${sideId}/review`, {
      cookie: c.curator,
      method: "POST",
      body: { decision: "approved" },
    });
    expect(ok.status).toBe(200);

    // The approval binds b, the current curve and the render made from them, with their SHA-256s.
    const transferB = await testDb
      .selectFrom("transfers")
      .select(["id", "sha256"])
      .where("id", "=", b.done.body.transferId)
      .executeTakeFirstOrThrow();
    const review = await testDb
      .selectFrom("reviews")
      .selectAll()
      .where("side_id", "=", sideId)
      .where("decision", "=", "approved")
      .executeTakeFirstOrThrow();
    const renderB = await renderRow(second.id);
    expect(review).toMatchObject({
      transfer_id: transferB.id,
      transfer_sha256: transferB.sha256,
      render_id: second.id,
      render_sha256: second.sha256,
      curve_choice_id: renderB.curve_choice_id,
    });
    expect(review.transfer_id).not.toBe(a.done.body.transferId);
    const event = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("subject_id", "=", sideId)
      .where("kind", "=", "side.approved")
      .executeTakeFirstOrThrow();
    expect(event.payload).toMatchObject({
      transfer: { id: transferB.id, sha256: transferB.sha256 },
      render: { id: second.id, sha256: second.sha256 },
      curveChoice: { id: renderB.curve_choice_id },
    });

    // The PREMIS export names that triple in the approval, and marks the first copy superseded.
    const premis = await api(`/api/discs/${discId}/export?format=premis`, { cookie: c.curator });
    expect(premis.status).toBe(200);
    const xml = String(premis.body);
    const appraisal = xml.slice(
      xml.lastIndexOf("<premis:event>", xml.indexOf("Approved by a curator")),
      xml.indexOf("</premis:event>", xml.indexOf("Approved by a curator")),
    );
    expect(appraisal).toContain(b.key);
    expect(appraisal).not.toContain(a.key);
    expect(appraisal).toContain(String(renderB.object_key));
    expect(appraisal).toContain(renderB.curve_choice_id);
    expect(xml).toContain("superseded access copy");
  }, 180_000);

  it("a curve change after a render supersedes the render", async () => {
    const { sideIds } = await assignedDisc(c, `LC-${tag}-3`, ["A"]);
    const [sideId] = sideIds;
    await uploadTransfer(c, sideId, flatTransfer(1, 31), "flat.wav");
    await chooseCurve(c, [sideId], rolloff(75));
    const first = await renderAndWait(c, sideId);
    await chooseCurve(c, [sideId], rolloff(50), "Lighter rolloff: the sibilants were dulled.");
    expect(await sideRow(sideId)).toMatchObject({ status: "curve_chosen", current_render_id: null });
    expect((await renderRow(first.id)).superseded_reason).toMatch(/new curve/);
    expect((await submit(sideId)).status).toBe(409);
    const event = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("subject_id", "=", sideId)
      .where("kind", "=", "side.render_superseded")
      .executeTakeFirstOrThrow();
    expect(event.payload).toMatchObject({ renderId: first.id });
  }, 120_000);

  it("a render that finishes after the curve changed is recorded as superseded and does not move the side", async () => {
    const { sideIds } = await assignedDisc(c, `LC-${tag}-4`, ["A"]);
    const [sideId] = sideIds;
    await uploadTransfer(c, sideId, flatTransfer(1, 41), "flat.wav");
    await chooseCurve(c, [sideId], rolloff(75));
    const running = await queueRenderByHand(sideId);
    await chooseCurve(c, [sideId], rolloff(100), "Heavier rolloff chosen while the render ran.");
    expect(await runRenderJob(running, { db: testDb, finalAttempt: true })).toBe("done");
    const r = await renderRow(running);
    expect(r.status).toBe("done");
    expect(r.sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(r.superseded_reason).toMatch(/new curve was chosen while it was being made/);
    expect(await sideRow(sideId)).toMatchObject({ status: "curve_chosen", current_render_id: null });
  }, 120_000);

  it("a render that finishes after a new transfer was accepted is recorded as superseded and does not move the side", async () => {
    const { sideIds } = await assignedDisc(c, `LC-${tag}-5`, ["A"]);
    const [sideId] = sideIds;
    await uploadTransfer(c, sideId, flatTransfer(1, 51), "a.wav");
    await chooseCurve(c, [sideId]);
    const running = await queueRenderByHand(sideId);
    const b = await uploadTransfer(c, sideId, flatTransfer(1, 52), "b.wav");
    expect(b.done.status).toBe(201);
    await runRenderJob(running, { db: testDb, finalAttempt: true });
    expect((await renderRow(running)).superseded_reason).toMatch(/newer flat transfer/);
    expect(await sideRow(sideId)).toMatchObject({
      status: "curve_chosen",
      current_transfer_id: b.done.body.transferId,
      current_render_id: null,
    });
    // The render that is current afterwards is made from b.
    const fresh = await renderAndWait(c, sideId);
    expect((await renderRow(fresh.id)).transfer_id).toBe(b.done.body.transferId);
    expect((await sideRow(sideId)).status).toBe("rendered");
  }, 120_000);
});

describe("the database holds the lifecycle", () => {
  it("refuses a review whose render was not made from the review's transfer and curve choice", async () => {
    const { sideIds } = await assignedDisc(c, `LC-${tag}-6`, ["A"]);
    const [sideId] = sideIds;
    const a = await uploadTransfer(c, sideId, flatTransfer(1, 61), "a.wav");
    await chooseCurve(c, [sideId]);
    const first = await renderAndWait(c, sideId);
    await uploadTransfer(c, sideId, flatTransfer(1, 62), "b.wav");
    const second = await renderAndWait(c, sideId);
    const curatorId = (
      await testDb.selectFrom("users").select("id").where("role", "=", "curator").executeTakeFirstOrThrow()
    ).id;
    const fromA = await testDb
      .selectFrom("transfers")
      .select(["id", "sha256"])
      .where("id", "=", a.done.body.transferId)
      .executeTakeFirstOrThrow();
    const choice = await testDb
      .selectFrom("curve_choices")
      .select(["id", "spec_sha256"])
      .where("side_id", "=", sideId)
      .executeTakeFirstOrThrow();
    const base = {
      side_id: sideId,
      curator_id: curatorId,
      curve_choice_id: choice.id,
      curve_spec_sha256: choice.spec_sha256,
    };

    // The render made from b, named with the transfer a: refused by the foreign key, whatever the decision.
    await expect(
      testDb
        .insertInto("reviews")
        .values({
          ...base,
          decision: "returned",
          reason: "test",
          transfer_id: fromA.id,
          transfer_sha256: fromA.sha256,
          render_id: second.id,
          render_sha256: second.sha256,
        })
        .execute(),
    ).rejects.toThrow(/reviews_render_made_from/);
    // A consistent but superseded triple (a, the curve, the first render) cannot be approved.
    await expect(
      testDb
        .insertInto("reviews")
        .values({
          ...base,
          decision: "approved",
          transfer_id: fromA.id,
          transfer_sha256: fromA.sha256,
          render_id: first.id,
          render_sha256: first.sha256,
        })
        .execute(),
    ).rejects.toThrow(/current transfer, curve choice and the render/);
    // The current triple with a SHA-256 that is not the render's: refused.
    const current = await sideRow(sideId);
    const b = await testDb
      .selectFrom("transfers")
      .select(["id", "sha256"])
      .where("id", "=", current.current_transfer_id!)
      .executeTakeFirstOrThrow();
    await expect(
      testDb
        .insertInto("reviews")
        .values({
          ...base,
          decision: "approved",
          transfer_id: b.id,
          transfer_sha256: b.sha256,
          render_id: second.id,
          render_sha256: "0".repeat(64),
        })
        .execute(),
    ).rejects.toThrow(/reviews_render_sha/);
    // An approval that leaves out the render: refused.
    await expect(
      testDb
        .insertInto("reviews")
        .values({ ...base, decision: "approved", transfer_id: b.id, transfer_sha256: b.sha256 })
        .execute(),
    ).rejects.toThrow(/render/);
    expect(
      await testDb.selectFrom("reviews").select("id").where("side_id", "=", sideId).execute(),
    ).toHaveLength(0);
  }, 180_000);

  it("refuses a status step that is not in the lifecycle, and a current render not made from the current work", async () => {
    const { sideIds } = await assignedDisc(c, `LC-${tag}-7`, ["A"]);
    const [sideId] = sideIds;
    await expect(
      testDb.updateTable("sides").set({ status: "approved" }).where("id", "=", sideId).execute(),
    ).rejects.toThrow(/cannot go from assigned to approved/);
    await expect(
      testDb.updateTable("sides").set({ status: "in_review" }).where("id", "=", sideId).execute(),
    ).rejects.toThrow();
    await uploadTransfer(c, sideId, flatTransfer(1, 71), "a.wav");
    await chooseCurve(c, [sideId]);
    const r = await renderAndWait(c, sideId);
    await uploadTransfer(c, sideId, flatTransfer(1, 72), "b.wav");
    // Pointing the side back at the render made from a, while b is current: refused.
    await expect(
      testDb
        .updateTable("sides")
        .set({ status: "rendered", current_render_id: r.id })
        .where("id", "=", sideId)
        .execute(),
    ).rejects.toThrow(/sides_current_render/);
    // A rendered side without a render: refused.
    await expect(
      testDb.updateTable("sides").set({ status: "rendered" }).where("id", "=", sideId).execute(),
    ).rejects.toThrow(/sides_status_has_its_work/);
  }, 180_000);

  it("holds the same steps as lib/sides/lifecycle.ts", async () => {
    const rows = await testDb.selectFrom("side_transitions").select(["from_status", "to_status"]).execute();
    const inDb = rows.map((r) => `${r.from_status}→${r.to_status}`).sort();
    const inCode = [...new Set(transitions.map((t) => `${t.from}→${t.to}`))].sort();
    expect(inDb).toEqual(inCode);
    // …and the app's own role cannot add a step.
    await expect(
      testDb
        .insertInto("side_transitions")
        .values({ from_status: "catalogued", to_status: "approved" })
        .execute(),
    ).rejects.toThrow(/permission denied/);
  });
});

describe("four eyes across rounds", () => {
  it("refuses approval by anyone who made any transfer, curve or render of the side, even in an earlier round", async () => {
    const { discId, sideIds } = await assignedDisc(c, `LC-${tag}-8`, ["A"]);
    const [sideId] = sideIds;
    await uploadTransfer(c, sideId, flatTransfer(1, 81), "a.wav");
    await chooseCurve(c, [sideId]);
    const first = await renderAndWait(c, sideId);
    expect((await submit(sideId)).status).toBe(200);
    expect(
      (
        await api(`/api/sides/${sideId}/review`, {
          cookie: c.curator,
          method: "POST",
          body: { decision: "returned", reason: "Hum at 50 Hz: transfer again." },
        })
      ).status,
    ).toBe(200);
    // The second round: a new transfer, a new render.
    await uploadTransfer(c, sideId, flatTransfer(1, 82), "b.wav");
    await renderAndWait(c, sideId);
    expect((await submit(sideId)).status).toBe(200);
    await fixityNow(c, discId, sideIds);
    // The curator is recorded as the requester of the first round's render only (set by hand, as a colleague who moved roles).
    const curatorId = (
      await testDb
        .selectFrom("users")
        .select("id")
        .where("email", "=", demoAccounts.find((a) => a.role === "curator")!.email)
        .executeTakeFirstOrThrow()
    ).id;
    await testDb.updateTable("renders").set({ requested_by: curatorId }).where("id", "=", first.id).execute();
    const refused = await api(`/api/sides/${sideId}/review`, {
      cookie: c.curator,
      method: "POST",
      body: { decision: "approved" },
    });
    expect(refused.status).toBe(403);
    expect(refused.body.error.message).toMatch(/earlier one/);
    expect((await sideRow(sideId)).status).toBe("in_review");
  }, 180_000);
});
