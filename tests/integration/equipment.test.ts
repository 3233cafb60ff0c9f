// The equipment register against the running app, worker, PostgreSQL and s3rver: items and
// their edits as provenance, the database's own refusals, chains, an upload made with a
// chain and a swapped stylus, the coding history the render writes from it, a stylus's
// hours, calibrations fitted against the expected curve, recall with CSV, findings and the
// window since the last good check, and the record and PREMIS naming the same items.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { bufferSource, parseCodingHistory, readWavHeader } from "@/lib/audio";
import { analogGainDb, analogModel, RIAA_SPEC } from "@/lib/curves";
import { api, appUrl, signInCookie } from "../support/app";
import { testDb } from "../support/db";
import {
  assignedDisc,
  chooseCurve,
  flatTransfer,
  type LabCookies,
  renderAndWait,
  uploadTransfer,
} from "../support/pipeline";

const run = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase();
const cookie = {} as LabCookies & { admin: string };
const ids = {} as Record<
  "turntable" | "arm" | "cartridge" | "stylus" | "stylus2" | "preamp" | "converter",
  string
>;
let chainId: string;
let today: string;

async function register(who: string, body: object) {
  const r = await api("/api/equipment/items", { cookie: who, method: "POST", body });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return r.body.item.id as string;
}

/** The recording characteristic of RIAA as a flat chain plays a test disc, with a cartridge's treble droop added. */
function testDiscPoints(droopDbAt10k = -1.2) {
  const model = analogModel(RIAA_SPEC);
  const hz = [31.5, 63, 125, 250, 500, 1000, 2000, 4000, 6300, 8000, 10_000, 12_500, 16_000];
  return hz.map((f) => ({
    hz: f,
    db: Number((-analogGainDb(model, f) + droopDbAt10k * (f / 10_000) ** 2 + 3).toFixed(3)),
  }));
}

beforeAll(async () => {
  for (const role of ["admin", "archivist", "engineer", "curator"] as const) {
    const a = demoAccounts.find((x) => x.role === role)!;
    cookie[role] = await signInCookie(a.email, a.password);
  }
  today = new Date().toISOString().slice(0, 10);
  ids.turntable = await register(cookie.admin, {
    kind: "turntable",
    make: "Harrowgate",
    model: `TT-9 ${run}`,
    serial: "HG-1182",
    inServiceOn: "2025-03-01",
  });
  ids.arm = await register(cookie.engineer, {
    kind: "tonearm",
    make: "Harrowgate",
    model: "LA-12",
    serial: "A77",
  });
  ids.cartridge = await register(cookie.engineer, {
    kind: "cartridge",
    make: "Vellum Audio",
    model: `MC-3 ${run}`,
    serial: "C-5521",
  });
  ids.stylus = await register(cookie.engineer, {
    kind: "stylus",
    make: "Vellum Audio",
    model: "S-30",
    serial: "ST-301",
    stylusTip: { value: 3, unit: "mil" },
    stylusShape: "truncated elliptical",
  });
  ids.stylus2 = await register(cookie.engineer, {
    kind: "stylus",
    make: "Vellum Audio",
    model: "S-25",
    serial: `ST-${run}`,
    stylusTip: { value: 63.5, unit: "um" },
    stylusShape: "conical",
  });
  ids.preamp = await register(cookie.engineer, {
    kind: "preamplifier",
    make: "Fenwick",
    model: "FP-1 flat",
    serial: "P9",
  });
  ids.converter = await register(cookie.engineer, {
    kind: "converter",
    make: "Larkspur",
    model: "AD-24",
    serial: "LX-40",
  });
  const chain = await api("/api/equipment/chains", {
    cookie: cookie.engineer,
    method: "POST",
    body: {
      name: `Bench 2 coarse groove ${run}`,
      itemIds: [ids.turntable, ids.arm, ids.cartridge, ids.stylus, ids.preamp, ids.converter],
    },
  });
  expect(chain.status, JSON.stringify(chain.body)).toBe(201);
  chainId = chain.body.chain.id;
}, 60_000);

afterAll(async () => {
  await testDb.destroy();
});

describe("the register", () => {
  it("stores a tip typed in mil as micrometres and shows it in both", async () => {
    const r = await api(`/api/equipment/items/${ids.stylus}`, { cookie: cookie.curator });
    expect(r.status).toBe(200);
    expect(r.body.item.stylusTipUm).toBeCloseTo(76.2, 6);
    const second = await api(`/api/equipment/items/${ids.stylus2}`, { cookie: cookie.archivist });
    expect(second.body.item.stylusTipUm).toBeCloseTo(63.5, 6);
  });

  it("lets every signed-in role read it, and only admins and engineers change it", async () => {
    for (const role of ["admin", "archivist", "engineer", "curator"] as const)
      expect((await api("/api/equipment/items", { cookie: cookie[role] })).status, role).toBe(200);
    for (const role of ["archivist", "curator"] as const) {
      const r = await api("/api/equipment/items", {
        cookie: cookie[role],
        method: "POST",
        body: { kind: "other", make: "Nope" },
      });
      expect(r.status, role).toBe(403);
      const f = await api(`/api/equipment/items/${ids.stylus}/findings`, {
        cookie: cookie[role],
        method: "POST",
        body: { foundOn: today, outcome: "good", description: "Looked at it." },
      });
      expect(f.status, role).toBe(403);
    }
    // A calibration is an engineer's measurement: not even an admin records one.
    const cal = await api(`/api/equipment/chains/${chainId}/calibrations`, {
      cookie: cookie.admin,
      method: "POST",
      body: { calibratedOn: today, testDisc: "x", points: testDiscPoints() },
    });
    expect(cal.status).toBe(403);
  });

  it("refuses stylus fields on another kind, and a last day before the first, with sentences", async () => {
    const r = await api("/api/equipment/items", {
      cookie: cookie.engineer,
      method: "POST",
      body: {
        kind: "cartridge",
        make: "Vellum Audio",
        stylusTip: { value: 3, unit: "mil" },
        inServiceOn: "2026-05-01",
        outOfServiceOn: "2026-04-01",
      },
    });
    expect(r.status).toBe(422);
    expect(r.body.error.fields.stylusTip).toEqual(["Only a stylus has a tip size."]);
    expect(r.body.error.fields.outOfServiceOn[0]).toMatch(/before it came into service/);
  });

  it("has the database refuse what must never be stored, whatever the app sends", async () => {
    await expect(
      testDb
        .insertInto("equipment_items")
        .values({
          kind: "cartridge",
          make: "X",
          stylus_tip_um: 76.2,
          stylus_shape: null,
          in_service_on: null,
          out_of_service_on: null,
          created_by: null,
        })
        .execute(),
    ).rejects.toThrow(/equipment_items_stylus_fields/);
    await expect(
      testDb
        .insertInto("equipment_items")
        .values({
          kind: "other",
          make: "X",
          stylus_tip_um: null,
          stylus_shape: null,
          in_service_on: "2026-02-01",
          out_of_service_on: "2026-01-01",
          created_by: null,
        })
        .execute(),
    ).rejects.toThrow(/equipment_items_service_dates/);
    await expect(
      testDb
        .insertInto("equipment_items")
        .values({
          kind: "amplifier" as never,
          make: "X",
          stylus_tip_um: null,
          stylus_shape: null,
          in_service_on: null,
          out_of_service_on: null,
          created_by: null,
        })
        .execute(),
    ).rejects.toThrow(/equipment_items_kind/);
    // Two styli in one chain, and a row whose kind is not its item's.
    await expect(
      testDb
        .insertInto("equipment_chain_items")
        .values({ chain_id: chainId, item_id: ids.stylus2, kind: "stylus" })
        .execute(),
    ).rejects.toThrow(/equipment_chain_items_one_per_kind/);
    await expect(
      testDb
        .insertInto("equipment_chain_items")
        .values({ chain_id: chainId, item_id: ids.stylus2, kind: "other" })
        .execute(),
    ).rejects.toThrow(/foreign key/);
  });

  it("records each edit as a provenance event with the fields before and after, and refuses a stale one", async () => {
    const before = await api(`/api/equipment/items/${ids.converter}`, { cookie: cookie.engineer });
    const edit = await api(`/api/equipment/items/${ids.converter}`, {
      cookie: cookie.engineer,
      method: "PATCH",
      body: {
        make: "Larkspur",
        model: "AD-24",
        serial: "LX-40",
        notes: "Recalibrated by the maker in 2026.",
        version: before.body.item.version,
      },
    });
    expect(edit.status, JSON.stringify(edit.body)).toBe(200);
    expect(edit.body.item.changed).toBe(true);
    const event = await testDb
      .selectFrom("provenance_events")
      .select(["kind", "payload", "subject_type"])
      .where("subject_id", "=", ids.converter)
      .where("kind", "=", "equipment.item_edited")
      .executeTakeFirstOrThrow();
    expect(event.subject_type).toBe("equipment");
    expect(event.payload).toMatchObject({
      before: { notes: "" },
      after: { notes: "Recalibrated by the maker in 2026." },
    });
    const stale = await api(`/api/equipment/items/${ids.converter}`, {
      cookie: cookie.engineer,
      method: "PATCH",
      body: { make: "Larkspur", version: before.body.item.version },
    });
    expect(stale.status).toBe(409);
    const kind = await api(`/api/equipment/items/${ids.converter}`, {
      cookie: cookie.engineer,
      method: "PATCH",
      body: { kind: "preamplifier", make: "Larkspur", version: edit.body.item.version },
    });
    expect(kind.status).toBe(422);
    const registered = await testDb
      .selectFrom("provenance_events")
      .select("kind")
      .where("subject_id", "=", ids.stylus)
      .execute();
    expect(registered.map((e) => e.kind)).toContain("equipment.item_registered");
  });
});

describe("chains", () => {
  let spareId: string;
  let spareVersion: number;

  it("hold at most one item of each kind but other", async () => {
    const r = await api("/api/equipment/chains", {
      cookie: cookie.engineer,
      method: "POST",
      body: { name: `Two styli ${run}`, itemIds: [ids.stylus, ids.stylus2] },
    });
    expect(r.status).toBe(422);
    expect(r.body.error.message).toMatch(/one stylus/);
    const taken = await api("/api/equipment/chains", {
      cookie: cookie.engineer,
      method: "POST",
      body: { name: `bench 2 COARSE groove ${run}`, itemIds: [ids.stylus] },
    });
    expect(taken.status).toBe(409);
  });

  it("record a calibration against a curve the server names: a preset version, or else RIAA, never the client's", async () => {
    // An item of its own, so that no other test's window of doubt starts from this calibration.
    const filter = await register(cookie.engineer, {
      kind: "other",
      make: "Fenwick",
      model: `Rumble filter ${run}`,
    });
    const spare = await api("/api/equipment/chains", {
      cookie: cookie.engineer,
      method: "POST",
      body: { name: `Spare filter ${run}`, itemIds: [filter] },
    });
    expect(spare.status, JSON.stringify(spare.body)).toBe(201);
    spareId = spare.body.chain.id as string;
    spareVersion = spare.body.chain.version as number;
    const cal = await api(`/api/equipment/chains/${spareId}/calibrations`, {
      cookie: cookie.engineer,
      method: "POST",
      body: {
        calibratedOn: "2026-01-05",
        testDisc: "Lab frequency disc FR-78 side A",
        points: testDiscPoints(),
        // A curve and a name of the client's own: not what the record may say the disc was cut with.
        expectedSpec: { ...RIAA_SPEC, turnover: { unit: "us", value: 500 } },
        expectedName: "Anything at all",
      },
    });
    expect(cal.status, JSON.stringify(cal.body)).toBe(201);
    expect(cal.body.calibration.expectedName).toBe("RIAA (IEC 60098)");
    const stored = await testDb
      .selectFrom("equipment_calibrations")
      .select(["expected_name", "expected_spec"])
      .where("id", "=", cal.body.calibration.id)
      .executeTakeFirstOrThrow();
    expect(stored.expected_name).toBe("RIAA (IEC 60098)");
    expect(stored.expected_spec).toEqual(JSON.parse(JSON.stringify(RIAA_SPEC)));
  });

  it("refuse a calibration of a retired chain, as its page offers none", async () => {
    const retired = await api(`/api/equipment/chains/${spareId}`, {
      cookie: cookie.engineer,
      method: "PATCH",
      body: { retired: true, version: spareVersion },
    });
    expect(retired.status, JSON.stringify(retired.body)).toBe(200);
    const late = await api(`/api/equipment/chains/${spareId}/calibrations`, {
      cookie: cookie.engineer,
      method: "POST",
      body: {
        calibratedOn: "2026-01-06",
        testDisc: "Lab frequency disc FR-78 side A",
        points: testDiscPoints(),
      },
    });
    expect(late.status).toBe(409);
    expect(late.body.error.message).toMatch(/retired/);
  });

  it("list their items in the order of the chain, from the disc to the file", async () => {
    const r = await api(`/api/equipment/chains/${chainId}`, { cookie: cookie.curator });
    expect(r.status).toBe(200);
    expect(r.body.chain.items.map((i: { kind: string }) => i.kind)).toEqual([
      "turntable",
      "tonearm",
      "cartridge",
      "stylus",
      "preamplifier",
      "converter",
    ]);
  });
});

describe("a transfer made with a chain", () => {
  let sideId: string;
  let transferId: string;

  it("keeps the items actually used, the swapped stylus in place of the chain's", async () => {
    const { sideIds } = await assignedDisc(cookie, `EQ-${run}`, ["A"]);
    sideId = sideIds[0];
    await chooseCurve(cookie, sideIds);
    const up = await uploadTransfer(cookie, sideId, flatTransfer(2, 21), `EQ-${run}-A.wav`, {
      details: { chainId, swapItemId: ids.stylus2, measuredSpeedRpm: 78.26 },
    });
    expect(up.done.status, JSON.stringify(up.done.body)).toBe(201);
    transferId = up.done.body.transferId;
    const rows = await testDb
      .selectFrom("transfer_equipment")
      .select(["item_id", "kind", "swapped", "stylus_tip_um"])
      .where("transfer_id", "=", transferId)
      .execute();
    expect(rows.map((r) => r.item_id).sort()).toEqual(
      [ids.turntable, ids.arm, ids.cartridge, ids.stylus2, ids.preamp, ids.converter].sort(),
    );
    expect(rows.find((r) => r.kind === "stylus")).toMatchObject({ swapped: true });
    // The snapshot is a record: the app cannot change it.
    await expect(
      testDb
        .updateTable("transfer_equipment")
        .set({ make: "Other" })
        .where("transfer_id", "=", transferId)
        .execute(),
    ).rejects.toThrow();
    const event = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("kind", "=", "side.transfer_accepted")
      .where("subject_id", "=", sideId)
      .executeTakeFirstOrThrow();
    expect(event.payload).toMatchObject({ equipment: { chain: { id: chainId } } });
  });

  it("refuses a swap without a chain, and an item out of service that day", async () => {
    const { sideIds } = await assignedDisc(cookie, `EQ2-${run}`, ["A"]);
    const noChain = await uploadTransfer(cookie, sideIds[0], flatTransfer(1, 22), "x.wav", {
      details: { swapItemId: ids.stylus2 },
    });
    expect(noChain.done.status).toBe(422);
    expect(noChain.done.body.error.fields.swapItemId).toBeDefined();
    const retiredStylus = await register(cookie.engineer, {
      kind: "stylus",
      make: "Vellum Audio",
      model: "S-40",
      stylusTip: { value: 4, unit: "mil" },
      inServiceOn: "2020-01-01",
      outOfServiceOn: "2021-01-01",
    });
    const idle = await uploadTransfer(cookie, sideIds[0], flatTransfer(1, 23), "y.wav", {
      details: { chainId, swapItemId: retiredStylus },
    });
    expect(idle.done.status).toBe(422);
    expect(idle.done.body.error.message).toMatch(/Not in service/);
  });

  it("counts the transfer's duration in the swapped stylus's hours, not the chain's own stylus's", async () => {
    const used = await api(`/api/equipment/items/${ids.stylus2}`, { cookie: cookie.engineer });
    expect(used.body.item.hoursOfUse * 3600).toBeCloseTo(2, 3);
    expect(used.body.item.transferCount).toBe(1);
    const spare = await api(`/api/equipment/items/${ids.stylus}`, { cookie: cookie.engineer });
    expect(spare.body.item.hoursOfUse).toBe(0);
  });

  it("writes the register's analogue-source and converter lines into the access copy's coding history", async () => {
    const render = await renderAndWait(cookie, sideId);
    const link = await fetch(`${appUrl}/api/renders/${render.id}/download`, {
      headers: { cookie: cookie.curator },
      redirect: "manual",
    });
    const file = new Uint8Array(await (await fetch(link.headers.get("location")!)).arrayBuffer());
    const header = await readWavHeader(bufferSource(file));
    const lines = parseCodingHistory(header.bext!.codingHistory);
    expect(lines[0]).toMatchObject({ algorithm: "ANALOGUE", mode: "stereo" });
    expect(lines[0].text).toContain(`cartridge Vellum Audio MC-3 ${run} SN C-5521`);
    expect(lines[0].text).toContain(`stylus Vellum Audio S-25 SN ST-${run} 2.5 mil (63.5 um) conical`);
    expect(lines[0].text).toContain(`turntable Harrowgate TT-9 ${run} SN HG-1182`);
    expect(lines[0].text).toContain("measured speed 78.26 rpm");
    expect(lines[1]).toMatchObject({ algorithm: "PCM", samplingHz: 44_100, wordLength: 24, mode: "stereo" });
    expect(lines[1].text).toContain("Larkspur AD-24 SN LX-40 A/D");
    // Then the render's own line, as before.
    expect(lines[2]).toMatchObject({ algorithm: "PCM", mode: "mono" });
    expect(header.bext!.codingHistory).not.toMatch(/S-30/);
  });

  it("names the same items in the record and in PREMIS", async () => {
    const { discId } = await testDb
      .selectFrom("sides")
      .select("disc_id as discId")
      .where("id", "=", sideId)
      .executeTakeFirstOrThrow();
    const record = await api(`/api/discs/${discId}/export?format=json`, { cookie: cookie.curator });
    expect(record.status).toBe(200);
    const t = record.body.transfers.find((x: { id: string }) => x.id === transferId);
    expect(t.equipment.chain.id).toBe(chainId);
    expect(t.equipment.items.map((i: { model: string }) => i.model)).toContain("S-25");
    const premis = await fetch(`${appUrl}/api/discs/${discId}/export?format=premis`, {
      headers: { cookie: cookie.curator },
    });
    const xml = await premis.text();
    expect(xml).toMatch(/<premis:agentType[^>]*>hardware<\/premis:agentType>/);
    expect(xml).toContain(`Vellum Audio S-25 SN ST-${run}`);
    expect(xml).toMatch(/<premis:linkingAgentRole>stylus<\/premis:linkingAgentRole>/);
  });

  it("shows the chain's latest calibration on or before the transfer, and how old it was", async () => {
    const cal = await api(`/api/equipment/chains/${chainId}/calibrations`, {
      cookie: cookie.engineer,
      method: "POST",
      body: {
        calibratedOn: "2026-11-20",
        testDisc: "Lab frequency disc FR-78 side B",
        points: testDiscPoints(),
      },
    });
    expect(cal.status, JSON.stringify(cal.body)).toBe(201);
    expect(cal.body.calibration.expectedName).toMatch(/RIAA/);
    // The droop is what the chain adds: seen against the expected curve, largely fitted away by a free rolloff.
    expect(cal.body.calibration.deviationWorstDb).toBeGreaterThan(0.8);
    expect(cal.body.calibration.deviationRmsDb).toBeGreaterThan(cal.body.calibration.fitRmsDb);
    const list = await api(`/api/sides/${sideId}/transfers`, { cookie: cookie.curator });
    const t = list.body.transfers.find((x: { id: string }) => x.id === transferId);
    expect(t.equipment.calibration).toMatchObject({
      testDisc: "Lab frequency disc FR-78 side B",
      calibratedOn: "2026-11-20",
    });
    const expectedAge = Math.round((Date.parse(today) - Date.parse("2026-11-20")) / 86_400_000);
    expect(t.equipment.calibration.ageDays).toBe(expectedAge);
    // It measured the chain's own stylus; this transfer swapped another in.
    expect(t.equipment.calibration.itemsDiffer).toBe(true);
  });

  it("refuses a calibration whose points cannot settle the corners asked for", async () => {
    const r = await api(`/api/equipment/chains/${chainId}/calibrations`, {
      cookie: cookie.engineer,
      method: "POST",
      body: {
        calibratedOn: today,
        testDisc: "Lab frequency disc FR-78 side B",
        points: testDiscPoints().filter((p) => p.hz >= 1000 && p.hz <= 4000),
        fit: ["shelf", "levelOffset"],
      },
    });
    expect(r.status).toBe(422);
    expect(Object.keys(r.body.error.fields)[0]).toMatch(/^fit\./);
  });

  it("lists the transfers made with an item between two days, and as CSV", async () => {
    const within = await api(`/api/equipment/items/${ids.stylus2}/transfers?from=${today}&to=${today}`, {
      cookie: cookie.archivist,
    });
    expect(within.status).toBe(200);
    expect(within.body.transfers.map((t: { transferId: string }) => t.transferId)).toEqual([transferId]);
    expect(within.body.transfers[0]).toMatchObject({
      shelfMark: `EQ-${run}`,
      side: "A",
      swapped: true,
      current: true,
    });
    const before = await api(`/api/equipment/items/${ids.stylus2}/transfers?to=2026-01-01`, {
      cookie: cookie.archivist,
    });
    expect(before.body.transfers).toEqual([]);
    const backwards = await api(`/api/equipment/items/${ids.stylus2}/transfers?from=${today}&to=2026-01-01`, {
      cookie: cookie.archivist,
    });
    expect(backwards.status).toBe(422);
    const csv = await fetch(
      `${appUrl}/api/equipment/items/${ids.stylus2}/transfers?from=${today}&format=csv`,
      {
        headers: { cookie: cookie.curator },
      },
    );
    expect(csv.status).toBe(200);
    expect(csv.headers.get("content-type")).toMatch(/text\/csv/);
    expect(csv.headers.get("content-disposition")).toMatch(/attachment/);
    const lines = (await csv.text()).trim().split("\r\n");
    expect(lines[0]).toMatch(/^transferred_at,shelf_mark,side,/);
    expect(lines).toHaveLength(2);
    expect(lines[1]).toContain(`EQ-${run},A,`);
    expect(lines[1]).toContain(transferId);
  });

  it("lists every transfer since the last good check when a fault is found", async () => {
    // An inspection long before the transfer, then a calibration of a chain holding the
    // cartridge before it too; the fault's window starts from the later of the two.
    const good = await api(`/api/equipment/items/${ids.cartridge}/findings`, {
      cookie: cookie.engineer,
      method: "POST",
      body: { foundOn: "2026-10-01", outcome: "good", description: "Inspected under the microscope: sound." },
    });
    expect(good.status).toBe(201);
    expect(good.body.window).toBeNull();
    const fault = await api(`/api/equipment/items/${ids.cartridge}/findings`, {
      cookie: cookie.engineer,
      method: "POST",
      body: { foundOn: today, outcome: "fault", description: "Cantilever bent, found on the bench." },
    });
    expect(fault.status, JSON.stringify(fault.body)).toBe(201);
    expect(fault.body.window).toMatchObject({
      from: "2026-11-20",
      to: today,
      since: { kind: "calibration" },
    });
    expect(fault.body.transfers.map((t: { transferId: string }) => t.transferId)).toContain(transferId);
    const item = await api(`/api/equipment/items/${ids.cartridge}`, { cookie: cookie.curator });
    expect(item.body.findings[0]).toMatchObject({
      outcome: "fault",
      window: { from: "2026-11-20", to: today },
    });
    expect(item.body.findings[0].transfersInDoubt).toBeGreaterThanOrEqual(1);
    // The stylus swapped in was never checked: its window runs from its first transfer.
    const chipped = await api(`/api/equipment/items/${ids.stylus2}/findings`, {
      cookie: cookie.engineer,
      method: "POST",
      body: { foundOn: today, outcome: "fault", description: "Tip chipped." },
    });
    expect(chipped.body.window).toMatchObject({ from: null, to: today, since: null });
    expect(chipped.body.transfers).toHaveLength(1);
    const log = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("kind", "=", "equipment.finding_recorded")
      .where("subject_id", "=", ids.stylus2)
      .executeTakeFirstOrThrow();
    expect(log.payload).toMatchObject({ outcome: "fault", transfersInDoubt: 1 });
  });
});
