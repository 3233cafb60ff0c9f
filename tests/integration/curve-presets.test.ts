// The preset library against the real test database and the running app.
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { api, signInCookie } from "../support/app";
import { ownerDb, testDb } from "../support/db";

let engineer: string;
let curator: string;

beforeAll(async () => {
  engineer = await signInCookie(
    demoAccounts.find((a) => a.role === "engineer")!.email,
    demoAccounts.find((a) => a.role === "engineer")!.password,
  );
  curator = await signInCookie(
    demoAccounts.find((a) => a.role === "curator")!.email,
    demoAccounts.find((a) => a.role === "curator")!.password,
  );
});

afterAll(async () => {
  await testDb.destroy();
  await ownerDb.destroy();
});

const spec = (turnoverHz: number) => ({
  turnover: { unit: "hz", value: turnoverHz },
  shelf: { unit: "hz", value: 50 },
  rolloff: { unit: "db10k", value: 10 },
  reference: { hz: 1000, db: 0 },
  speedRatio: 1,
});

describe("the seeded library", () => {
  it("holds the published standards with their sources, and generic settings named by value only", async () => {
    const { status, body } = await api("/api/curves/presets", { cookie: curator });
    expect(status).toBe(200);
    const names: string[] = body.presets.map((p: { name: string }) => p.name);
    const riaa = body.presets.find((p: { name: string }) => p.name.startsWith("RIAA"));
    expect(riaa.spec.turnover).toEqual({ unit: "us", value: 318 });
    expect(riaa.notes).toMatch(/IEC 60098/);
    expect(names.some((n) => /BS 1928:1955/.test(n))).toBe(true);
    expect(names.some((n) => /7950/.test(n))).toBe(true);
    const generic = names.filter((n) => n.startsWith("Turnover "));
    expect(generic.length).toBeGreaterThanOrEqual(50);
    for (const n of generic)
      expect(n).toMatch(
        /^Turnover \d+ Hz · (no rolloff|rolloff [\d.]+ dB) · (shelf 50 Hz|no shelf, 20 Hz high-pass)$/,
      );
  });
});

describe("editing presets", () => {
  it("makes a new immutable version on each edit and keeps the old one readable", async () => {
    const name = `Bench test ${Date.now()}`;
    const created = await api("/api/curves/presets", {
      cookie: engineer,
      method: "POST",
      body: { name, spec: spec(500), notes: "From a test-disc transfer.", changeNote: "First measurement" },
    });
    expect(created.status).toBe(201);
    const id = created.body.preset.id;
    expect(created.body.preset.currentVersion).toBe(1);

    const edited = await api(`/api/curves/presets/${id}`, {
      cookie: engineer,
      method: "PATCH",
      body: { spec: spec(400), changeNote: "Second disc side agrees better with 400 Hz" },
    });
    expect(edited.status).toBe(200);
    expect(edited.body.preset.currentVersion).toBe(2);
    expect(edited.body.preset.spec.turnover.value).toBe(400);
    expect(edited.body.preset.createdBy).toBe("Wen Okafor");

    const versions = await api(`/api/curves/presets/${id}/versions`, { cookie: curator });
    expect(versions.body.versions.map((v: { version: number }) => v.version)).toEqual([2, 1]);
    expect(versions.body.versions[1].spec.turnover.value).toBe(500);
    expect(versions.body.versions[0].changeNote).toMatch(/400 Hz/);
    // Each edit is in the lab's provenance log, with the values before and after.
    const events = await testDb
      .selectFrom("provenance_events")
      .select(["kind", "payload"])
      .where("subject_id", "=", id)
      .orderBy("seq")
      .execute();
    expect(events.map((e) => e.kind)).toEqual(["preset.created", "preset.versioned"]);
    expect(
      (events[1].payload as { before: { spec: { turnover: { value: number } } } }).before.spec.turnover.value,
    ).toBe(500);
  });

  it("requires a change note, and names the parameter of a curve that cannot be built", async () => {
    const name = `Unbounded ${Date.now()}`;
    const noNote = await api("/api/curves/presets", {
      cookie: engineer,
      method: "POST",
      body: { name, spec: spec(500), changeNote: "" },
    });
    expect(noNote.status).toBe(422);
    expect(Object.keys(noNote.body.error.fields)).toContain("changeNote");

    const unbounded = await api("/api/curves/presets", {
      cookie: engineer,
      method: "POST",
      body: {
        name,
        spec: { turnover: { unit: "hz", value: 500 }, rolloff: { unit: "db10k", value: 10 } },
        changeNote: "try",
      },
    });
    expect(unbounded.status).toBe(422);
    expect(unbounded.body.error.message).toMatch(/shelf|high-pass/i);
    expect(Object.keys(unbounded.body.error.fields).join()).toMatch(/^spec\./);
    const written = await testDb.selectFrom("curve_presets").select("id").where("name", "=", name).execute();
    expect(written).toHaveLength(0);
  });

  it("refuses a duplicate name", async () => {
    const name = `Twice ${Date.now()}`;
    expect(
      (
        await api("/api/curves/presets", {
          cookie: engineer,
          method: "POST",
          body: { name, spec: spec(300), changeNote: "one" },
        })
      ).status,
    ).toBe(201);
    const again = await api("/api/curves/presets", {
      cookie: engineer,
      method: "POST",
      body: { name: name.toUpperCase(), spec: spec(300), changeNote: "two" },
    });
    expect(again.status).toBe(409);
  });

  it("is refused by the database when someone tries to alter or remove a version", async () => {
    const row = await testDb
      .selectFrom("curve_preset_versions")
      .select(["preset_id", "version"])
      .limit(1)
      .executeTakeFirstOrThrow();
    await expect(
      sql`UPDATE curve_preset_versions SET change_note = 'rewritten' WHERE preset_id = ${row.preset_id} AND version = ${row.version}`.execute(
        ownerDb,
      ),
    ).rejects.toThrow(/immutable/);
    await expect(
      sql`DELETE FROM curve_preset_versions WHERE preset_id = ${row.preset_id}`.execute(ownerDb),
    ).rejects.toThrow(/immutable/);
  });
});

describe("the computation service", () => {
  it("returns poles, zeros, the response table, peak gain and the IIR sections for a curve and a rate", async () => {
    const riaa = {
      turnover: { unit: "us", value: 318 },
      shelf: { unit: "us", value: 3180 },
      rolloff: { unit: "us", value: 75 },
    };
    const res = await api("/api/curves/response", {
      cookie: curator,
      method: "POST",
      body: { spec: riaa, sampleRateHz: 44100, frequenciesHz: [20, 1000, 20000] },
    });
    expect(res.status).toBe(200);
    // IEC 60098 time constants give +19.27 dB at 20 Hz and −19.62 dB at 20 kHz relative to 1 kHz (the figures).
    expect(res.body.response[0].db).toBeCloseTo(19.27, 1);
    expect(res.body.response[1].db).toBeCloseTo(0, 6);
    expect(res.body.response[2].db).toBeCloseTo(-19.62, 1);
    expect(res.body.polesRadS).toHaveLength(2);
    expect(res.body.zerosRadS).toHaveLength(1);
    expect(res.body.iir.sos.length).toBeGreaterThan(0);
    expect(res.body.iir.maxErrorDb).toBeLessThanOrEqual(0.005);
    expect(res.body.peakGainDb).toBeGreaterThan(19);
  });

  it("refuses a rate too low for 20 kHz, naming it", async () => {
    const res = await api("/api/curves/response", {
      cookie: curator,
      method: "POST",
      body: { spec: {}, sampleRateHz: 32000 },
    });
    expect(res.status).toBe(422);
    expect(Object.keys(res.body.error.fields)).toContain("sampleRateHz");
  });

  it("fits points and refuses what they cannot determine", async () => {
    const riaa = {
      turnover: { unit: "us", value: 318 },
      shelf: { unit: "us", value: 3180 },
      rolloff: { unit: "us", value: 75 },
    };
    const table = await api("/api/curves/response", {
      cookie: curator,
      method: "POST",
      body: { spec: riaa, frequenciesHz: [30, 50, 100, 200, 500, 1000, 2000, 5000, 10000, 15000] },
    });
    const points = table.body.response.map((r: { hz: number; db: number }) => ({ hz: r.hz, db: r.db }));
    const fit = await api("/api/curves/fit", {
      cookie: curator,
      method: "POST",
      body: {
        points,
        fit: ["turnover", "rolloff"],
        initial: {
          turnover: { unit: "hz", value: 400 },
          shelf: { unit: "us", value: 3180 },
          rolloff: { unit: "us", value: 50 },
        },
      },
    });
    expect(fit.status).toBe(200);
    const turnover = fit.body.fit.corners.find((c: { parameter: string }) => c.parameter === "turnover");
    expect(turnover.tauUs).toBeCloseTo(318, 0);
    const lowOnly = points.filter((p: { hz: number }) => p.hz <= 500);
    const refused = await api("/api/curves/fit", {
      cookie: curator,
      method: "POST",
      body: { points: lowOnly, fit: ["rolloff"], initial: riaa },
    });
    expect(refused.status).toBe(422);
  });
});
