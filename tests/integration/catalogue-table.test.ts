// The catalogue table's questions against the real test database and the running app:
// sorting by title and recording year, the first side shown, the capped count, assigning
// one side, and correcting an accession with its event.
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import {
  cappedCountQuery,
  countCap,
  countDiscs,
  estimateDiscs,
  estimatedPast,
  filteredDiscs,
} from "@/lib/catalogue/list-query";
import { api } from "../support/app";
import { ownerDb, testDb } from "../support/db";
import {
  assignedDisc,
  demoUserId,
  flatTransfer,
  type LabCookies,
  labCookies,
  newAccession,
  sendParts,
  sha256Of,
  startUpload,
  uploadTransfer,
} from "../support/pipeline";

let cookie: LabCookies;
const tag = Date.now().toString(36);
let accessionId: string;
let engineerId: string;

beforeAll(async () => {
  cookie = await labCookies();
  accessionId = await newAccession(cookie.archivist, `TBL-${tag}`, "Table test shelf");
  engineerId = await demoUserId("engineer");
});

afterAll(async () => {
  await testDb.destroy();
  await ownerDb.destroy();
});

async function createDisc(shelfMark: string, title: string, year: number | "", extra = {}) {
  const r = await api("/api/discs", {
    cookie: cookie.archivist,
    method: "POST",
    body: {
      accessionId,
      shelfMark,
      format: "shellac_78",
      nominalSpeedRpm: 78,
      groove: "coarse",
      cut: "lateral",
      recordedFromYear: year,
      recordedToYear: year,
      sides: [
        { designation: "B", title: `${title} (B side)`, performers: "Second side players" },
        { designation: "A", title, performers: "Ivy Pennock and the Selby Four" },
      ],
      ...extra,
    },
  });
  expect(r.status).toBe(201);
  return r.body.disc as { id: string; sides: { id: string; designation: string }[] };
}

describe("the catalogue list", () => {
  it("sorts by the first side's title and by recording year, blanks last in both directions", async () => {
    await createDisc(`SRT-${tag}-1`, "Orchard Lantern", 1931);
    await createDisc(`SRT-${tag}-2`, "Blue Meadow", 1928);
    await createDisc(`SRT-${tag}-3`, "", "");
    await createDisc(`SRT-${tag}-4`, "Copper River", 1940);
    const list = async (sort: string) =>
      (
        await api(`/api/discs?accession=${accessionId}&q=SRT-${tag}&sort=${sort}`, { cookie: cookie.curator })
      ).body.rows.map((r: { shelfMark: string }) => r.shelfMark.slice(-1));
    expect(await list("title")).toEqual(["2", "4", "1", "3"]);
    expect(await list("-title")).toEqual(["1", "4", "2", "3"]);
    expect(await list("year")).toEqual(["2", "1", "4", "3"]);
    expect(await list("-year")).toEqual(["4", "1", "2", "3"]);
  });

  it("gives each row its sides in designation order, so the first shows the A side's title and performers", async () => {
    const r = await api(`/api/discs?q=${encodeURIComponent(`SRT-${tag}-1`)}`, { cookie: cookie.curator });
    const [row] = r.body.rows;
    expect(row.sides[0]).toMatchObject({
      designation: "A",
      title: "Orchard Lantern",
      performers: "Ivy Pennock and the Selby Four",
    });
    expect(row.recordedFromYear).toBe(1931);
  });

  it("keeps the title sort key when a disc's first side is retitled", async () => {
    const d = await createDisc(`SRT-${tag}-5`, "Zither Evening", 1950);
    const current = (await api(`/api/discs/${d.id}`, { cookie: cookie.archivist })).body.disc;
    const edited = await api(`/api/discs/${d.id}`, {
      cookie: cookie.archivist,
      method: "PATCH",
      body: {
        ...current,
        sides: current.sides.map((s: { designation: string; title: string }) =>
          s.designation === "A" ? { ...s, title: "Amber Candle" } : s,
        ),
      },
    });
    expect(edited.status).toBe(200);
    const key = await testDb
      .selectFrom("discs")
      .select("first_title")
      .where("id", "=", d.id)
      .executeTakeFirstOrThrow();
    expect(key.first_title).toBe("Amber Candle");
  });

  it("counts up to 10 000 and then says only that there are more", async () => {
    const cap = await api("/api/accessions", {
      cookie: cookie.archivist,
      method: "POST",
      body: { identifier: `CAP-${tag}`, source: "A very large shelf", receivedOn: "2026-11-30" },
    });
    const capId: string = cap.body.accession.id;
    const insert = (from: number, to: number) =>
      sql`INSERT INTO discs (accession_id, shelf_mark, format, nominal_speed_rpm, groove, cut)
          SELECT ${capId}::uuid, 'ZZCAP-' || ${tag}::text || '-' || lpad(g::text, 5, '0'), 'shellac_78', 78, 'coarse', 'lateral'
          FROM generate_series(${from}::int, ${to}::int) g`.execute(ownerDb);
    try {
      await insert(1, 10_000);
      const exact = await api(`/api/discs?accession=${capId}`, { cookie: cookie.curator });
      expect(exact.body).toMatchObject({ total: 10_000, totalIsCapped: false, totalIsEstimated: false });
      await insert(10_001, 10_001);
      const capped = await api(`/api/discs?accession=${capId}&page=3`, { cookie: cookie.curator });
      expect(capped.body).toMatchObject({
        total: 10_000,
        totalIsCapped: true,
        totalIsEstimated: false,
        page: 3,
      });
      expect(capped.body.rows[0].shelfMark).toBe(`ZZCAP-${tag}-00101`);
    } finally {
      await ownerDb.deleteFrom("discs").where("accession_id", "=", capId).execute();
    }
  });
});

describe("the count of a side filter", () => {
  it("counted from the sides alone, equals the count over the discs", async () => {
    const d = await createDisc(`CNT-${tag}`, "Copper Lantern", 1931);
    const assigned = await api("/api/assignments", {
      cookie: cookie.archivist,
      method: "POST",
      body: { engineerId, sideIds: [d.sides[0].id] },
    });
    expect(assigned.status).toBe(200);
    for (const filter of [
      { status: "assigned" as const },
      { status: "catalogued" as const },
      { engineer: engineerId },
    ]) {
      const q = { ...filter, sort: "shelfMark" as const };
      // One snapshot for both counts, whatever other tests write meanwhile.
      const [fromSides, overDiscs] = await testDb
        .transaction()
        .setIsolationLevel("repeatable read")
        .execute(async (trx) => [
          await countDiscs(trx, q),
          (
            await trx
              .selectFrom(
                filteredDiscs(trx, q)
                  .select("d.id")
                  .limit(countCap + 1)
                  .as("c"),
              )
              .select((eb) => eb.fn.countAll<number>().as("n"))
              .executeTakeFirstOrThrow()
          ).n,
        ]);
      expect(cappedCountQuery(testDb, q).compile().sql).toMatch(/from "sides"/);
      expect(overDiscs).toBeGreaterThan(0);
      expect(fromSides).toMatchObject({
        total: Math.min(Number(overDiscs), countCap),
        totalIsCapped: Number(overDiscs) > countCap,
      });
    }
  });
});

describe("a broad search", () => {
  it("says more than 10 000 on the planner's estimate, yet gives the exact total when its page is not full", async () => {
    const created = await api("/api/accessions", {
      cookie: cookie.archivist,
      method: "POST",
      body: { identifier: `BROAD-${tag}`, source: "A shelf of one word", receivedOn: "2026-11-30" },
    });
    const broadId: string = created.body.accession.id;
    const word = `zbroad${tag}`;
    // Half the discs hold the word at 78 rpm, the other half lack it at 45: the planner,
    // taking the two as independent, expects a quarter of them to hold it at 45, and none do.
    const insert = (part: string, words: string, speed: number) =>
      sql`INSERT INTO discs (accession_id, shelf_mark, format, nominal_speed_rpm, groove, cut, search_tsv)
          SELECT ${broadId}::uuid, 'ZZBRD-' || ${tag}::text || ${part}::text || lpad(g::text, 5, '0'), 'shellac_78',
                 ${speed}, 'coarse', 'lateral', to_tsvector('simple', ${words}::text)
          FROM generate_series(1, 50000) g`.execute(ownerDb);
    const list = async (query: string) =>
      (await api(`/api/discs?q=${word}&${query}`, { cookie: cookie.curator })).body as {
        total: number;
        totalIsCapped: boolean;
        totalIsEstimated: boolean;
        rows: { shelfMark: string }[];
      };
    try {
      await insert("-A-", word, 78);
      await insert("-B-", "plain", 45);
      await sql`ANALYZE discs`.execute(ownerDb);
      const q = { q: word, speed: 45, sort: "shelfMark" as const };
      expect(await estimateDiscs(testDb, q)).toBeGreaterThanOrEqual(estimatedPast);

      const first = await list("pageSize=50");
      // Not counted, and the answer says so: the page words it as the database's estimate.
      expect(first).toMatchObject({ total: 10_000, totalIsCapped: true, totalIsEstimated: true });
      expect(first.rows.map((r) => r.shelfMark)).toEqual(
        Array.from({ length: 50 }, (_, i) => `ZZBRD-${tag}-A-${String(i + 1).padStart(5, "0")}`),
      );
      // The last page, not full: 50 000 discs in all, more than 10 000.
      const last = await list("pageSize=30&page=1667");
      expect(last.rows).toHaveLength(20);
      expect(last).toMatchObject({ total: 10_000, totalIsCapped: true, totalIsEstimated: false });
      const past = await list("pageSize=30&page=1668");
      expect(past).toMatchObject({ rows: [], total: 10_000, totalIsCapped: true });
      // Expected at 45 rpm by the estimate, found at none: the empty page gives the exact count.
      expect(await list("speed=45")).toMatchObject({
        rows: [],
        total: 0,
        totalIsCapped: false,
        totalIsEstimated: false,
      });
      expect(await list("speed=45&page=2")).toMatchObject({ rows: [], total: 0, totalIsCapped: false });
    } finally {
      await ownerDb.deleteFrom("discs").where("accession_id", "=", broadId).execute();
      await sql`ANALYZE discs`.execute(ownerDb);
    }
  });
});

describe("assigning", () => {
  it("assigns one side of a disc and leaves the other side catalogued", async () => {
    const d = await createDisc(`ONE-${tag}`, "Northern Willow", 1933);
    const sideA = d.sides.find((s) => s.designation === "A")!;
    const r = await api("/api/assignments", {
      cookie: cookie.archivist,
      method: "POST",
      body: { engineerId, sideIds: [sideA.id] },
    });
    expect(r.status).toBe(200);
    expect(r.body.assigned).toBe(1);
    const sides = await testDb
      .selectFrom("sides")
      .select(["designation", "status", "assigned_engineer_id"])
      .where("disc_id", "=", d.id)
      .orderBy("designation")
      .execute();
    expect(sides).toEqual([
      { designation: "A", status: "assigned", assigned_engineer_id: engineerId },
      { designation: "B", status: "catalogued", assigned_engineer_id: null },
    ]);
  });
});

describe("accessions", () => {
  it("are corrected with one event naming each changed field before and after", async () => {
    const created = await api("/api/accessions", {
      cookie: cookie.archivist,
      method: "POST",
      body: { identifier: `FIX-${tag}`, source: "Estate of P. Quarrie", receivedOn: "2026-10-03" },
    });
    const id: string = created.body.accession.id;
    const r = await api(`/api/accessions/${id}`, {
      cookie: cookie.archivist,
      method: "PATCH",
      body: { identifier: `FIX-${tag}`, source: "Estate of R. Quarrie", receivedOn: "2026-03-10", notes: "" },
    });
    expect(r.status).toBe(200);
    expect(r.body.accession).toMatchObject({ source: "Estate of R. Quarrie", receivedOn: "2026-03-10" });
    const events = await testDb
      .selectFrom("provenance_events")
      .select(["kind", "payload"])
      .where("subject_id", "=", id)
      .orderBy("seq")
      .execute();
    expect(events.map((e) => e.kind)).toEqual(["accession.received", "accession.edited"]);
    expect(events[1].payload).toMatchObject({
      changed: ["source", "receivedOn"],
      before: { source: "Estate of P. Quarrie", receivedOn: "2026-10-03" },
      after: { source: "Estate of R. Quarrie", receivedOn: "2026-03-10" },
    });

    // Saving again without a change records nothing more.
    await api(`/api/accessions/${id}`, {
      cookie: cookie.archivist,
      method: "PATCH",
      body: { identifier: `FIX-${tag}`, source: "Estate of R. Quarrie", receivedOn: "2026-03-10", notes: "" },
    });
    const again = await testDb
      .selectFrom("provenance_events")
      .select(sql<number>`count(*)::int`.as("n"))
      .where("subject_id", "=", id)
      .executeTakeFirstOrThrow();
    expect(again.n).toBe(2);
  });

  it("refuses an identifier another accession has, a date not written YYYY-MM-DD, and an engineer", async () => {
    const body = { identifier: `TBL-${tag}`, source: "x", receivedOn: "2026-11-30", notes: "" };
    const other = await api("/api/accessions", {
      cookie: cookie.archivist,
      method: "POST",
      body: { identifier: `DUP-${tag}`, source: "y", receivedOn: "2026-11-30" },
    });
    const id: string = other.body.accession.id;
    const taken = await api(`/api/accessions/${id}`, { cookie: cookie.archivist, method: "PATCH", body });
    expect(taken.status).toBe(409);
    expect(taken.body.error.fields.identifier).toBeTruthy();
    const badDate = await api(`/api/accessions/${id}`, {
      cookie: cookie.archivist,
      method: "PATCH",
      body: { ...body, identifier: `DUP-${tag}`, receivedOn: "03/12/2026" },
    });
    expect(badDate.status).toBe(422);
    expect(badDate.body.error.fields.receivedOn.join(" ")).toMatch(/YYYY-MM-DD/);
    const engineer = await api(`/api/accessions/${id}`, {
      cookie: cookie.engineer,
      method: "PATCH",
      body: { ...body, identifier: `DUP-${tag}` },
    });
    expect(engineer.status).toBe(403);
  });
});

describe("a flat transfer identical to another side's", () => {
  it("is held until the engineer confirms, with a warning naming the other side, and then recorded as such", async () => {
    const c = await labCookies();
    const first = await assignedDisc(c, `DUPA-${tag}`, ["A"]);
    const second = await assignedDisc(c, `DUPB-${tag}`, ["A"]);
    const bytes = flatTransfer(1, 901);
    const a = await uploadTransfer(c, first.sideIds[0], bytes, "first.wav", { confirmDuplicate: false });
    expect(a.done.status).toBe(201);

    // As the browser does it: start, send the parts, ask for completion without confirming.
    const up = await startUpload(c.engineer, second.sideIds[0], "second.wav", bytes.length);
    const parts = await sendParts(bytes, up.partSize, up.urls);
    const complete = (confirmDuplicate: boolean) =>
      api("/api/uploads/complete", {
        cookie: c.engineer,
        method: "POST",
        body: {
          uploadId: up.uploadId,
          parts,
          sha256: sha256Of(bytes),
          bytes: bytes.length,
          confirmDuplicate,
        },
      });
    const held = await complete(false);
    expect(held.status).toBe(409);
    expect(held.body.error.code).toBe("duplicate_file");
    expect(held.body.error.message).toContain(`DUPA-${tag} side A`);
    expect(held.body.error.message).toContain("first.wav");
    // Nothing accepted, and the upload still open for the engineer's answer.
    const open = await testDb
      .selectFrom("uploads")
      .select("state")
      .where("id", "=", up.uploadId)
      .executeTakeFirstOrThrow();
    expect(open.state).toBe("open");
    expect(
      await testDb.selectFrom("transfers").select("id").where("side_id", "=", second.sideIds[0]).execute(),
    ).toHaveLength(0);

    // The engineer confirms: the same upload completes (its parts were already put together).
    const confirmed = await complete(true);
    expect(confirmed.status).toBe(201);
    const event = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("kind", "=", "side.transfer_accepted")
      .where("subject_id", "=", second.sideIds[0])
      .executeTakeFirstOrThrow();
    expect(event.payload).toMatchObject({ sameFileAs: [{ shelfMark: `DUPA-${tag}`, side: "A" }] });
  });
});
