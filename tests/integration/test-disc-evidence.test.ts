// A curve choice that rests on a test-disc measurement keeps the measurement as evidence:
// the points, the server's own fit and its residuals, and the points file with its SHA-256;
// it is shown with the choice, and goes into the record and PREMIS.
import { execFile } from "node:child_process";
import { createHash } from "node:crypto";
import { promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { resolveCurve } from "@/lib/curves";
import { api, appUrl } from "../support/app";
import { validateBag } from "../support/bagit";
import { testDb } from "../support/db";
import {
  assignedDisc,
  fixityNow,
  flatTransfer,
  labCookies,
  type LabCookies,
  renderAndWait,
  uploadTransfer,
} from "../support/pipeline";
import { runPython } from "../support/python";

const tag = Date.now().toString(36);
let c: LabCookies;
let sideIds: string[];
let discId: string;
/** The points file: RIAA playback levels worked out by scipy, 1.5 dB above 0 dB at 1 kHz. */
let pointsFile: string;
const hz = [30, 50, 100, 200, 300, 500, 700, 1000, 2000, 3000, 5000, 7000, 10_000, 14_000];

/** Starts from a curve some way off the standard: the fit must find the standard's corners. */
const startingCurve = {
  turnover: { unit: "hz", value: 400 },
  shelf: { unit: "us", value: 3180 },
  rolloff: { unit: "db10k", value: 10 },
};

function choice(extra: object) {
  return {
    sideIds: [sideIds[0]],
    overrides: startingCurve,
    cutSpeedRpm: 78,
    transferSpeedRpm: 78,
    rationale: "The lab's frequency test disc, measured on the house chain.",
    ...extra,
  };
}

beforeAll(async () => {
  c = await labCookies();
  ({ discId, sideIds } = await assignedDisc(c, `TD-${tag}`, ["A", "B"]));
  // The RIAA playback curve from the IEC 60098 time constants (3180, 318, 75 µs), by scipy.signal.freqs.
  const { db } = await runPython<{ db: number[] }>("riaa_table.py", { hz });
  pointsFile = [
    "hz,db",
    "# house test disc, left channel",
    ...hz.map((f, i) => `${f},${(db[i] + 1.5).toFixed(3)}`),
  ].join("\n");
}, 60_000);

afterAll(async () => {
  await testDb.destroy();
});

describe("test-disc measurements kept with a curve choice", () => {
  it("keeps the points, the server's fit and the file's SHA-256, and shows them with the choice", async () => {
    const r = await api("/api/curve-choices", {
      cookie: c.engineer,
      method: "POST",
      body: choice({
        evidenceKind: "test_disc",
        measurement: {
          pointsKind: "playback",
          fit: ["turnover", "rolloff", "levelOffset"],
          sourceText: pointsFile,
          sourceFileName: "house-test-disc.csv",
        },
      }),
    });
    expect(r.status).toBe(201);
    const choiceId = r.body.choices[0].choiceId as string;

    const row = await testDb
      .selectFrom("curve_choice_evidence")
      .selectAll()
      .where("choice_id", "=", choiceId)
      .executeTakeFirstOrThrow();
    expect(row.points).toHaveLength(hz.length);
    expect(row.source_sha256).toBe(createHash("sha256").update(pointsFile).digest("hex"));
    expect(row.source_file_name).toBe("house-test-disc.csv");
    // The fit recovers the standard's corners from points scipy worked out (IEC 60098: 318 µs and 75 µs),
    // and the 1.5 dB the points were lifted by.
    const fitted = resolveCurve(row.fitted_spec);
    expect(fitted.turnover!.tauUs).toBeCloseTo(318, 0);
    expect(fitted.rolloff!.tauUs).toBeCloseTo(75, 0);
    expect(row.level_offset_db).toBeCloseTo(1.5, 1);
    expect(row.rms_db).toBeLessThan(0.05);
    expect(row.residuals).toHaveLength(hz.length);

    const list = await api(`/api/sides/${sideIds[0]}/curve-choices`, { cookie: c.curator });
    expect(list.status).toBe(200);
    const shown = list.body.choices.find((x: { id: string }) => x.id === choiceId);
    expect(shown.measurement).toMatchObject({
      pointsKind: "playback",
      fitParameters: ["turnover", "rolloff", "levelOffset"],
      sourceSha256: row.source_sha256,
    });
    expect(shown.measurement.points).toHaveLength(hz.length);

    // The event names the measurement; the record carries it and PREMIS says it in the event's detail.
    const event = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("subject_id", "=", sideIds[0])
      .where("kind", "in", ["side.curve_chosen", "side.curve_changed"])
      .orderBy("seq", "desc")
      .executeTakeFirstOrThrow();
    expect((event.payload as { testDisc?: { sourceSha256: string } }).testDisc?.sourceSha256).toBe(
      row.source_sha256,
    );
    const record = await api(`/api/discs/${discId}/export?format=json`, { cookie: c.curator });
    expect(record.status).toBe(200);
    const kept = record.body.curveChoices.find((x: { id: string }) => x.id === choiceId);
    expect(kept.testDiscMeasurement.points).toHaveLength(hz.length);
    expect(kept.testDiscMeasurement.sourceSha256).toBe(row.source_sha256);
    const premis = await api(`/api/discs/${discId}/export?format=premis`, { cookie: c.curator });
    expect(premis.status).toBe(200);
    expect(premis.body as string).toContain(
      `Test-disc measurement: ${hz.length} points of the playback curve`,
    );
    expect(premis.body as string).toContain(row.source_sha256!);
  });

  it("refuses a test-disc choice without points, points without a test disc, and points it cannot read", async () => {
    const missing = await api("/api/curve-choices", {
      cookie: c.engineer,
      method: "POST",
      body: choice({ evidenceKind: "test_disc" }),
    });
    expect(missing.status).toBe(422);
    expect(missing.body.error.fields.measurement.join(" ")).toMatch(/give the measured points/);

    const stray = await api("/api/curve-choices", {
      cookie: c.engineer,
      method: "POST",
      body: choice({
        evidenceKind: "listening",
        measurement: { pointsKind: "playback", fit: ["turnover"], sourceText: pointsFile },
      }),
    });
    expect(stray.status).toBe(422);
    expect(stray.body.error.fields.measurement.join(" ")).toMatch(/rests on a test disc/);

    const unreadable = await api("/api/curve-choices", {
      cookie: c.engineer,
      method: "POST",
      body: choice({
        evidenceKind: "test_disc",
        measurement: { pointsKind: "playback", fit: ["turnover"], sourceText: "hz,db\n100,3\n1 kHz,0\n" },
      }),
    });
    expect(unreadable.status).toBe(422);
    expect(unreadable.body.error.message).toMatch(/Line 3/);

    const tooFew = await api("/api/curve-choices", {
      cookie: c.engineer,
      method: "POST",
      body: choice({
        evidenceKind: "test_disc",
        measurement: {
          pointsKind: "playback",
          fit: ["turnover", "rolloff", "levelOffset"],
          sourceText: "100,3\n1000,0\n",
        },
      }),
    });
    expect(tooFew.status).toBe(422);
    expect(tooFew.body.error.message).toMatch(/at least 4 points/);
    // Nothing of the refused choices was kept.
    const count = await testDb
      .selectFrom("curve_choices")
      .select((eb) => eb.fn.countAll<string>().as("n"))
      .where("side_id", "=", sideIds[1])
      .executeTakeFirstOrThrow();
    expect(Number(count.n)).toBe(0);
  });

  it("is refused by the database for a choice that does not rest on a test disc, and never changes", async () => {
    const other = await api("/api/curve-choices", {
      cookie: c.engineer,
      method: "POST",
      body: { ...choice({ evidenceKind: "listening" }), sideIds: [sideIds[1]] },
    });
    expect(other.status).toBe(201);
    const evidence = {
      points_kind: "playback" as const,
      points: JSON.stringify([
        { hz: 100, db: 1 },
        { hz: 1000, db: 0 },
      ]),
      fit_parameters: ["levelOffset"],
      fitted_spec: "{}",
      level_offset_db: 0,
      residuals: "[]",
      rms_db: 0,
      worst_db: 0,
      worst_hz: 100,
    };
    await expect(
      testDb
        .insertInto("curve_choice_evidence")
        .values({ ...evidence, choice_id: other.body.choices[0].choiceId as string })
        .execute(),
    ).rejects.toThrow(/foreign key/);

    const kept = await testDb
      .selectFrom("curve_choice_evidence as e")
      .innerJoin("curve_choices as c", "c.id", "e.choice_id")
      .select("e.choice_id")
      .where("c.side_id", "=", sideIds[0])
      .executeTakeFirstOrThrow();
    await expect(
      testDb
        .updateTable("curve_choice_evidence")
        .set({ rms_db: 0 })
        .where("choice_id", "=", kept.choice_id)
        .execute(),
    ).rejects.toThrow(/permission denied|immutable/);
    await expect(
      sql`DELETE FROM curve_choice_evidence WHERE choice_id = ${kept.choice_id}`.execute(testDb),
    ).rejects.toThrow(/permission denied|immutable/);
  });

  it("puts the points file the approved curve rests on into the disc's bag, under its recorded SHA-256", async () => {
    const {
      discId: packagedDisc,
      sideIds: [side],
    } = await assignedDisc(c, `TDB-${tag}`, ["A"]);
    const chosen = await api("/api/curve-choices", {
      cookie: c.engineer,
      method: "POST",
      body: {
        ...choice({
          evidenceKind: "test_disc",
          measurement: {
            pointsKind: "playback",
            fit: ["turnover", "rolloff", "levelOffset"],
            sourceText: pointsFile,
          },
        }),
        sideIds: [side],
      },
    });
    expect(chosen.status).toBe(201);
    expect((await uploadTransfer(c, side, flatTransfer(2, 5), `TDB-${tag}.wav`)).done.status).toBe(201);
    await renderAndWait(c, side);
    const sent = await api(`/api/sides/${side}/transition`, {
      cookie: c.engineer,
      method: "POST",
      body: { to: "in_review" },
    });
    expect(sent.status).toBe(200);
    await fixityNow(c, packagedDisc, [side]);
    const approved = await api(`/api/sides/${side}/review`, {
      cookie: c.curator,
      method: "POST",
      body: { decision: "approved" },
    });
    expect(approved.status).toBe(200);

    const res = await fetch(`${appUrl}/api/discs/${packagedDisc}/export?format=zip`, {
      headers: { cookie: c.curator },
    });
    expect(res.status).toBe(200);
    const dir = await fs.mkdtemp(path.join(os.tmpdir(), "rillbook-td-"));
    try {
      await fs.writeFile(path.join(dir, "bag.zip"), Buffer.from(await res.arrayBuffer()));
      await promisify(execFile)("unzip", ["-q", path.join(dir, "bag.zip"), "-d", dir]);
      const bag = path.join(
        dir,
        (await fs.readdir(dir)).find((f) => f !== "bag.zip")!,
      );
      const report = await validateBag(bag);
      expect(report.problems).toEqual([]);
      const evidence = report.payload.find((p) => p.startsWith("data/evidence/"));
      expect(evidence).toBe(`data/evidence/TDB-${tag}-A-test-disc-points.csv`);
      expect(await fs.readFile(path.join(bag, evidence!), "utf8")).toBe(pointsFile);
      expect(report.manifests.sha256.get(evidence!)).toBe(
        createHash("sha256").update(pointsFile).digest("hex"),
      );
    } finally {
      await fs.rm(dir, { recursive: true, force: true });
    }
  }, 240_000);
});
