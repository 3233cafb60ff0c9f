// Choosing a side's playback curve: kept with the preset version's values of that moment.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { hashPassword } from "@/lib/auth/password";
import { api, signInCookie, uniqueEmail } from "../support/app";
import { testDb } from "../support/db";

const tag = Date.now().toString(36);
const cookie = {} as Record<"archivist" | "engineer" | "curator" | "otherEngineer", string>;
let engineerId: string;
let sideIds: string[];
let presetId: string;

beforeAll(async () => {
  for (const role of ["archivist", "engineer", "curator"] as const) {
    const a = demoAccounts.find((x) => x.role === role)!;
    cookie[role] = await signInCookie(a.email, a.password);
  }
  const other = uniqueEmail("engineer2");
  await testDb
    .insertInto("users")
    .values({
      email: other,
      name: "Second Engineer",
      role: "engineer",
      password_hash: await hashPassword("another engineer pass"),
    })
    .execute();
  cookie.otherEngineer = await signInCookie(other, "another engineer pass");
  engineerId = (
    await testDb
      .selectFrom("users")
      .select("id")
      .where("email", "=", demoAccounts.find((a) => a.role === "engineer")!.email)
      .executeTakeFirstOrThrow()
  ).id;

  const acc = await api("/api/accessions", {
    cookie: cookie.archivist,
    method: "POST",
    body: { identifier: `CC-${tag}`, source: "Curve choice tests", receivedOn: "2026-11-30" },
  });
  const disc = await api("/api/discs", {
    cookie: cookie.archivist,
    method: "POST",
    body: {
      accessionId: acc.body.accession.id,
      shelfMark: `CC-${tag}`,
      format: "shellac_78",
      nominalSpeedRpm: 78,
      groove: "coarse",
      cut: "lateral",
      sides: [{ designation: "A" }, { designation: "B" }],
    },
  });
  sideIds = disc.body.disc.sides.map((s: { id: string }) => s.id);
  await api("/api/assignments", {
    cookie: cookie.archivist,
    method: "POST",
    body: { engineerId, discIds: [disc.body.disc.id] },
  });
  const preset = await api("/api/curves/presets", {
    cookie: cookie.engineer,
    method: "POST",
    body: {
      name: `Choice test ${tag}`,
      spec: {
        turnover: { unit: "hz", value: 400 },
        shelf: { unit: "hz", value: 50 },
        rolloff: { unit: "db10k", value: 10 },
      },
      changeNote: "For the curve choice test",
    },
  });
  presetId = preset.body.preset.id;
});

afterAll(async () => {
  await testDb.destroy();
});

const choice = (extra: Record<string, unknown> = {}) => ({
  sideIds,
  presetId,
  presetVersion: 1,
  cutSpeedRpm: 78,
  transferSpeedRpm: 80,
  rationale: "Label's own leaflet for this series gives a 400 Hz turnover.",
  evidenceKind: "disc_documentation",
  evidence: "Sleeve notes, photographed in the disc folder",
  ...extra,
});

describe("curve choices", () => {
  it("records the choice for both sides with the preset values and the speed ratio, even before their transfers", async () => {
    const res = await api("/api/curve-choices", { cookie: cookie.engineer, method: "POST", body: choice() });
    expect(res.status).toBe(201);
    expect(res.body.choices).toHaveLength(2);
    // Recorded before any flat transfer (from the label's own leaflet): the choice becomes
    // each side's current curve, and the sides stay assigned until their transfers arrive.
    const sides = await testDb
      .selectFrom("sides")
      .select(["status", "current_curve_choice_id"])
      .where("id", "in", sideIds)
      .orderBy("id")
      .execute();
    expect(sides.map((s) => s.status)).toEqual(["assigned", "assigned"]);
    const chosen = new Set(res.body.choices.map((c: { choiceId: string }) => c.choiceId));
    for (const s of sides) expect(chosen.has(s.current_curve_choice_id)).toBe(true);
    const history = await api(`/api/sides/${sideIds[0]}/curve-choices`, { cookie: cookie.curator });
    const [current] = history.body.choices;
    // Played at 80 rpm what was cut at 78: every corner moves up by 80/78.
    expect(current.spec.speedRatio).toBeCloseTo(80 / 78, 12);
    expect(current.presetSpec.turnover).toEqual({ unit: "hz", value: 400 });
    expect(current.chosenBy).toBe("Wen Okafor");
  });

  it("keeps the values of the version chosen when the preset is edited later", async () => {
    await api(`/api/curves/presets/${presetId}`, {
      cookie: cookie.engineer,
      method: "PATCH",
      body: {
        spec: { turnover: { unit: "hz", value: 300 }, shelf: { unit: "hz", value: 50 } },
        changeNote: "Moved the turnover",
      },
    });
    const history = await api(`/api/sides/${sideIds[0]}/curve-choices`, { cookie: cookie.curator });
    expect(history.body.choices[0].presetSpec.turnover.value).toBe(400);
    expect(history.body.choices[0].presetVersion).toBe(1);
  });

  it("keeps every change of mind, the latest being current", async () => {
    const res = await api("/api/curve-choices", {
      cookie: cookie.engineer,
      method: "POST",
      body: choice({
        sideIds: [sideIds[1]],
        presetVersion: 2,
        overrides: { rolloff: { unit: "db10k", value: 13.7 } },
        rationale: "Listening: 13.7 dB of rolloff tames the surface noise.",
        evidenceKind: "listening",
      }),
    });
    expect(res.status).toBe(201);
    const history = await api(`/api/sides/${sideIds[1]}/curve-choices`, { cookie: cookie.curator });
    expect(history.body.choices).toHaveLength(2);
    expect(history.body.choices[0].spec.turnover.value).toBe(300);
    expect(history.body.choices[0].spec.rolloff).toEqual({ unit: "db10k", value: 13.7 });
    const events = await testDb
      .selectFrom("provenance_events")
      .select(["kind", "payload"])
      .where("subject_id", "=", sideIds[1])
      .orderBy("seq", "desc")
      .execute();
    expect(events[0].kind).toBe("side.curve_changed");
    expect((events[0].payload as { before: { choiceId: string } }).before.choiceId).toBe(
      history.body.choices[1].id,
    );
  });

  it("refuses other engineers, other roles, missing reasons and curves that cannot be built", async () => {
    expect(
      (await api("/api/curve-choices", { cookie: cookie.otherEngineer, method: "POST", body: choice() }))
        .status,
    ).toBe(403);
    expect(
      (await api("/api/curve-choices", { cookie: cookie.curator, method: "POST", body: choice() })).status,
    ).toBe(403);
    const noReason = await api("/api/curve-choices", {
      cookie: cookie.engineer,
      method: "POST",
      body: choice({ rationale: "" }),
    });
    expect(noReason.status).toBe(422);
    expect(noReason.body.error.fields.rationale).toBeTruthy();
    const bad = await api("/api/curve-choices", {
      cookie: cookie.engineer,
      method: "POST",
      body: choice({ overrides: { shelf: { unit: "hz", value: 2000 } } }),
    });
    expect(bad.status).toBe(422);
    expect(Object.keys(bad.body.error.fields).join()).toMatch(/^overrides\./);
  });
});
