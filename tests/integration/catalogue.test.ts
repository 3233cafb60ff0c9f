// The catalogue and the provenance log against the real test database and the running app.
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { verifyChain } from "@/lib/provenance";
import { api, signInCookie, waitForMail } from "../support/app";
import { ownerDb, testDb } from "../support/db";

const cookie = {} as Record<"archivist" | "engineer" | "curator" | "admin", string>;
let accessionId: string;
let engineerId: string;
const tag = Date.now().toString(36);

beforeAll(async () => {
  for (const role of ["archivist", "engineer", "curator", "admin"] as const) {
    const a = demoAccounts.find((x) => x.role === role)!;
    cookie[role] = await signInCookie(a.email, a.password);
  }
  const acc = await api("/api/accessions", {
    cookie: cookie.archivist,
    method: "POST",
    body: { identifier: `T-${tag}`, source: "Integration test shelf", receivedOn: "2026-11-30" },
  });
  expect(acc.status).toBe(201);
  accessionId = acc.body.accession.id;
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
  await ownerDb.destroy();
});

function disc(shelfMark: string, extra: Record<string, unknown> = {}) {
  return {
    accessionId,
    shelfMark,
    labelName: "Quellstone",
    catalogueNumber: `QS ${shelfMark.slice(-4)}`,
    format: "shellac_78",
    nominalSpeedRpm: 78,
    groove: "coarse",
    cut: "lateral",
    recordedFromYear: 1928,
    recordedToYear: 1929,
    sides: [
      {
        designation: "A",
        matrixNumber: `Q${shelfMark.slice(-5)}-1`,
        take: "2",
        title: "Harbour Lantern Waltz",
        performers: "Nell Carrow and the Marl Salon Trio",
      },
      {
        designation: "B",
        matrixNumber: `Q${shelfMark.slice(-5)}-2`,
        take: "1",
        title: "Winter Orchard Air",
        performers: "Nell Carrow",
      },
    ],
    ...extra,
  };
}

async function eventCount(): Promise<number> {
  return (
    await testDb
      .selectFrom("provenance_events")
      .select(sql<number>`count(*)::int`.as("n"))
      .executeTakeFirstOrThrow()
  ).n;
}

describe("the provenance log", () => {
  it("stays one unbroken chain after many concurrent writes", async () => {
    const results = await Promise.all(
      Array.from({ length: 12 }, (_, i) =>
        api("/api/discs", {
          cookie: cookie.archivist,
          method: "POST",
          body: disc(`CH-${tag}-${String(i).padStart(5, "0")}`),
        }),
      ),
    );
    expect(results.map((r) => r.status)).toEqual(Array(12).fill(201));
    const before = await eventCount();
    const report = await verifyChain(testDb);
    expect(report.ok).toBe(true);
    // Other suites may append while it walks: it saw at least every event there was before.
    expect(report.events).toBeGreaterThanOrEqual(before);
  });

  it("is refused UPDATE and DELETE by the database", async () => {
    // Even the owner, who has every right on the table, meets the triggers.
    await expect(
      sql`UPDATE provenance_events SET kind = 'rewritten' WHERE seq = (SELECT max(seq) FROM provenance_events)`.execute(
        ownerDb,
      ),
    ).rejects.toThrow(/append-only/);
    await expect(
      sql`DELETE FROM provenance_events WHERE seq = (SELECT max(seq) FROM provenance_events)`.execute(
        ownerDb,
      ),
    ).rejects.toThrow(/append-only/);
    await expect(sql`TRUNCATE provenance_events`.execute(ownerDb)).rejects.toThrow(/append-only/);
  });

  it("finds an event altered behind the app's back", async () => {
    const victim = await testDb
      .selectFrom("provenance_events")
      .select(["seq", "payload"])
      .where("kind", "=", "disc.created")
      .orderBy("seq", "desc")
      .limit(1)
      .executeTakeFirstOrThrow();
    const original = JSON.stringify(victim.payload);
    // As the database owner, with the guard switched off for this one change.
    await ownerDb.transaction().execute(async (trx) => {
      await sql`ALTER TABLE provenance_events DISABLE TRIGGER provenance_append_only`.execute(trx);
      await sql`UPDATE provenance_events SET payload = jsonb_set(payload, '{after,labelName}', '"Forged"') WHERE seq = ${victim.seq}`.execute(
        trx,
      );
      await sql`ALTER TABLE provenance_events ENABLE TRIGGER provenance_append_only`.execute(trx);
    });
    try {
      const report = await verifyChain(testDb);
      expect(report.ok).toBe(false);
      expect(report.brokenAt?.seq).toBe(Number(victim.seq));
      expect(report.brokenAt?.reason).toMatch(/content/);
    } finally {
      await ownerDb.transaction().execute(async (trx) => {
        await sql`ALTER TABLE provenance_events DISABLE TRIGGER provenance_append_only`.execute(trx);
        await sql`UPDATE provenance_events SET payload = ${original}::jsonb WHERE seq = ${victim.seq}`.execute(
          trx,
        );
        await sql`ALTER TABLE provenance_events ENABLE TRIGGER provenance_append_only`.execute(trx);
      });
    }
    expect((await verifyChain(testDb)).ok).toBe(true);
  });

  it("writes neither the change nor its event when the change fails", async () => {
    const shelfMark = `DUP-${tag}`;
    expect(
      (await api("/api/discs", { cookie: cookie.archivist, method: "POST", body: disc(shelfMark) })).status,
    ).toBe(201);
    const before = await eventCount();
    const again = await api("/api/discs", {
      cookie: cookie.archivist,
      method: "POST",
      body: disc(shelfMark.toLowerCase()),
    });
    expect(again.status).toBe(409);
    expect(again.body.error.fields.shelfMark).toBeTruthy();
    expect(await eventCount()).toBe(before);
  });
});

describe("disc records", () => {
  it("refuses bad input field by field", async () => {
    const res = await api("/api/discs", {
      cookie: cookie.archivist,
      method: "POST",
      body: disc(`BAD-${tag}`, {
        nominalSpeedRpm: -78,
        recordedFromYear: 1930,
        recordedToYear: 1920,
        format: "wax cylinder",
      }),
    });
    expect(res.status).toBe(422);
    expect(Object.keys(res.body.error.fields)).toEqual(expect.arrayContaining(["nominalSpeedRpm", "format"]));
    const years = await api("/api/discs", {
      cookie: cookie.archivist,
      method: "POST",
      body: disc(`BAD2-${tag}`, { recordedFromYear: 1930, recordedToYear: 1920 }),
    });
    expect(years.body.error.fields.recordedToYear[0]).toMatch(/backwards/);
  });

  it("does not let a second editor silently overwrite the first", async () => {
    const created = await api("/api/discs", {
      cookie: cookie.archivist,
      method: "POST",
      body: disc(`LOCK-${tag}`),
    });
    const d = created.body.disc;
    const base = {
      ...disc(d.shelfMark),
      version: d.version,
      sides: d.sides.map((s: Record<string, unknown>) => ({ ...s })),
    };
    const first = await api(`/api/discs/${d.id}`, {
      cookie: cookie.archivist,
      method: "PATCH",
      body: { ...base, labelName: "Varrowby" },
    });
    expect(first.status).toBe(200);
    expect(first.body.disc.version).toBe(d.version + 1);
    const events = await eventCount();
    const second = await api(`/api/discs/${d.id}`, {
      cookie: cookie.admin,
      method: "PATCH",
      body: { ...base, handlingNotes: "Gloves" },
    });
    expect(second.status).toBe(409);
    expect(second.body.error.message).toMatch(/changed while you were editing/);
    expect(second.body.error.details.current.labelName).toBe("Varrowby");
    expect(await eventCount()).toBe(events);
    const stored = await api(`/api/discs/${d.id}`, { cookie: cookie.curator });
    expect(stored.body.disc.handlingNotes).toBe("");
    const timeline = await api(`/api/discs/${d.id}/events`, { cookie: cookie.curator });
    const edit = timeline.body.events.find((e: { kind: string }) => e.kind === "disc.edited");
    expect(edit.payload).toMatchObject({
      changed: ["labelName"],
      before: { labelName: "Quellstone" },
      after: { labelName: "Varrowby" },
    });
  });

  it("finds discs by matrix number, performer and status", async () => {
    const shelfMark = `SRCH-${tag}`;
    await api("/api/discs", { cookie: cookie.archivist, method: "POST", body: disc(shelfMark) });
    const byMatrix = await api(`/api/discs?q=${encodeURIComponent(`Q${shelfMark.slice(-5)}-2`)}`, {
      cookie: cookie.curator,
    });
    expect(byMatrix.body.rows.map((r: { shelfMark: string }) => r.shelfMark)).toContain(shelfMark);
    const byPerformer = await api(`/api/discs?q=carrow&accession=${accessionId}&pageSize=200`, {
      cookie: cookie.curator,
    });
    expect(byPerformer.body.rows.map((r: { shelfMark: string }) => r.shelfMark)).toContain(shelfMark);
    const none = await api(`/api/discs?q=zzqxj-nothing&accession=${accessionId}`, { cookie: cookie.curator });
    expect(none.body.total).toBe(0);
    const sorted = await api(`/api/discs?accession=${accessionId}&sort=-shelfMark&pageSize=3`, {
      cookie: cookie.curator,
    });
    const marks = sorted.body.rows.map((r: { shelfMark: string }) => r.shelfMark);
    expect([...marks].sort().reverse()).toEqual(marks);
    expect(sorted.body.total).toBeGreaterThan(3);
  });
});

describe("the side workflow", () => {
  it("moves only by the work itself, one step at a time, and records each step", async () => {
    const created = await api("/api/discs", {
      cookie: cookie.archivist,
      method: "POST",
      body: disc(`FLOW-${tag}`),
    });
    const [sideA] = created.body.disc.sides;
    const skip = await api(`/api/sides/${sideA.id}/transition`, {
      cookie: cookie.engineer,
      method: "POST",
      body: { to: "curve_chosen" },
    });
    expect(skip.status).toBe(409);
    expect(skip.body.error.message).toMatch(/cannot become curve chosen/);

    const assign = await api("/api/assignments", {
      cookie: cookie.archivist,
      method: "POST",
      body: { engineerId, discIds: [created.body.disc.id] },
    });
    expect(assign.status).toBe(200);
    expect(assign.body.assigned).toBe(2);
    const mail = await waitForMail(
      (m) => m.subject.includes("assigned to you") && m.text.includes(`FLOW-${tag}`),
    );
    expect(mail.text).toMatch(/side A/);

    // The next step happens on the bench, not by a button: a manual move is refused.
    const manual = await api(`/api/sides/${sideA.id}/transition`, {
      cookie: cookie.engineer,
      method: "POST",
      body: { to: "transferred" },
    });
    expect(manual.status).toBe(409);
    expect(manual.body.error.message).toMatch(/when its flat transfer was accepted/);
    const skipping = await api(`/api/sides/${sideA.id}/transition`, {
      cookie: cookie.engineer,
      method: "POST",
      body: { to: "curve_chosen" },
    });
    expect(skipping.status).toBe(409);
    expect(skipping.body.error.message).toMatch(/cannot become curve chosen; next is flat transfer in/);
    const byArchivist = await api(`/api/sides/${sideA.id}/transition`, {
      cookie: cookie.archivist,
      method: "POST",
      body: { to: "approved" },
    });
    expect(byArchivist.status).toBe(403);

    const queue = await api("/api/queue", { cookie: cookie.engineer });
    expect(queue.body.sides.map((s: { id: string }) => s.id)).toContain(sideA.id);
    const timeline = await api(`/api/discs/${created.body.disc.id}/events`, { cookie: cookie.curator });
    const kinds = timeline.body.events.map((e: { kind: string }) => e.kind).reverse();
    expect(kinds).toEqual(["disc.created", "side.assigned", "side.assigned"]);
  });

  it("refuses to assign to someone who is not an engineer", async () => {
    const curatorId = (
      await testDb.selectFrom("users").select("id").where("role", "=", "curator").executeTakeFirstOrThrow()
    ).id;
    const created = await api("/api/discs", {
      cookie: cookie.archivist,
      method: "POST",
      body: disc(`NOENG-${tag}`),
    });
    const r = await api("/api/assignments", {
      cookie: cookie.archivist,
      method: "POST",
      body: { engineerId: curatorId, discIds: [created.body.disc.id] },
    });
    expect(r.status).toBe(422);
    expect(r.body.error.fields.engineerId).toBeTruthy();
  });
});
