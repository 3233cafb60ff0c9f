// Fixity catches an object altered in the bucket behind the app's back; the PREMIS export
// validates against the Library of Congress schema; the package's manifest verifies
// with sha256sum.
import { execFile } from "node:child_process";
import { existsSync, promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import { afterAll, beforeAll, describe, expect, it, onTestFinished } from "vitest";
import { runFixityJob } from "@/lib/fixity";
import { api, appUrl, waitForMail } from "../support/app";
import { damageStoredObject } from "../support/bucket";
import { testDb } from "../support/db";
import {
  approvedDisc,
  assignedDisc,
  chooseCurve,
  fixityNow,
  flatTransfer,
  type LabCookies,
  labCookies,
  uploadTransfer,
} from "../support/pipeline";

const run = promisify(execFile);
const tag = Date.now().toString(36);
// Reference data beside the repository (the Library of Congress PREMIS 3.0 schema); not part of the product.
const premisSchema = path.resolve(process.cwd(), "..", "shared", "schemas", "premis-v3-0.xsd");
let c: LabCookies;
let tmp: string;

beforeAll(async () => {
  c = await labCookies();
  tmp = await fs.mkdtemp(path.join(os.tmpdir(), "rillbook-export-"));
});

afterAll(async () => {
  await fs.rm(tmp, { recursive: true, force: true });
  await testDb.destroy();
});

describe("fixity", () => {
  it("does not check again, for the hourly sweep, an object checked since the sweep found it due", async () => {
    const { sideIds } = await assignedDisc(c, `FS-${tag}`, ["A"]);
    await chooseCurve(c, sideIds);
    expect((await uploadTransfer(c, sideIds[0], flatTransfer(1, 4), "fs.wav")).done.status).toBe(201);
    const { id } = await testDb
      .selectFrom("transfers")
      .select("id")
      .where("side_id", "=", sideIds[0])
      .executeTakeFirstOrThrow();
    const checks = async () =>
      (await testDb.selectFrom("fixity_checks").select("id").where("object_id", "=", id).execute()).length;
    // The sweep finds the transfer due (never checked); a curator's check of the disc runs first.
    const sweptAt = new Date(Date.now() - 1000).toISOString();
    expect(await runFixityJob(testDb, { kind: "transfer", id })).toBe("pass");
    expect(await checks()).toBe(1);
    // The sweep's own job for it then stands on that check, and reads nothing again.
    expect(await runFixityJob(testDb, { kind: "transfer", id, dueSince: sweptAt })).toBe("already checked");
    expect(await checks()).toBe(1);
    // A sweep that found it due after that check does read it again.
    const later = new Date(Date.now() + 1000).toISOString();
    expect(await runFixityJob(testDb, { kind: "transfer", id, dueSince: later })).toBe("pass");
    expect(await checks()).toBe(2);
  });

  it("finds an object altered in the bucket, raises an alert and mails the curators", async () => {
    const { discId, sideIds } = await assignedDisc(c, `FX-${tag}`, ["A"]);
    await chooseCurve(c, sideIds);
    const { key, done } = await uploadTransfer(c, sideIds[0], flatTransfer(1, 3), "fx.wav");
    expect(done.status).toBe(201);
    const first = await fixityNow(c, discId, sideIds);
    expect(first.map((r) => r.outcome)).toEqual(["pass"]);

    // Flip bytes in s3rver's own storage, as bit rot or a careless hand would.
    onTestFinished(await damageStoredObject(key, -10));

    const second = await fixityNow(c, discId, sideIds);
    expect(second[0].outcome).toBe("mismatch");
    const alerts = await api("/api/fixity", { cookie: c.curator });
    expect(alerts.body.alerts.map((a: { objectKey: string }) => a.objectKey)).toContain(key);
    const mail = await waitForMail(
      (m) => m.subject.startsWith("Fixity mismatch") && m.subject.includes(`FX-${tag}`),
    );
    expect(mail.text).toMatch(/restore/);
  }, 120_000);
});

describe("exports for the repository", () => {
  let discId: string;

  beforeAll(async () => {
    ({ discId } = await approvedDisc(c, `EX-${tag}`));
  }, 180_000);

  it("writes PREMIS 3.0 XML that the Library of Congress schema accepts", async (ctx) => {
    if (!existsSync(premisSchema))
      ctx.skip(`the PREMIS schema is not at ${premisSchema}, so the XML cannot be validated here`);
    const res = await fetch(`${appUrl}/api/discs/${discId}/export?format=premis`, {
      headers: { cookie: c.curator },
    });
    expect(res.status).toBe(200);
    const xml = await res.text();
    const file = path.join(tmp, "disc-premis.xml");
    await fs.writeFile(file, xml);
    // xmllint (Debian libxml2-utils) validating against the LoC schema; a failure throws with its report.
    const { stderr } = await run("xmllint", ["--noout", "--schema", premisSchema, file]);
    expect(stderr).toMatch(/validates/);
    expect(xml).toMatch(/<premis:eventType[^>]*>capture</);
    expect(xml).toMatch(/<premis:eventType[^>]*>fixity check</);
    expect(xml).toMatch(/<premis:messageDigestAlgorithm[^>]*>SHA-256</);

    const acc = (
      await testDb
        .selectFrom("discs")
        .select("accession_id")
        .where("id", "=", discId)
        .executeTakeFirstOrThrow()
    ).accession_id;
    const whole = await fetch(`${appUrl}/api/accessions/${acc}/export?format=premis`, {
      headers: { cookie: c.curator },
    });
    await fs.writeFile(path.join(tmp, "acc.xml"), await whole.text());
    const accRun = await run("xmllint", ["--noout", "--schema", premisSchema, path.join(tmp, "acc.xml")]);
    expect(accRun.stderr).toMatch(/validates/);
  });

  it("packages the approved disc as a BagIt bag whose manifest verifies with sha256sum", async () => {
    const res = await fetch(`${appUrl}/api/discs/${discId}/export?format=zip`, {
      headers: { cookie: c.curator },
    });
    expect(res.status).toBe(200);
    const name = /filename="([^"]+)\.zip"/.exec(res.headers.get("content-disposition") ?? "")![1];
    const zip = path.join(tmp, "package.zip");
    await fs.writeFile(zip, Buffer.from(await res.arrayBuffer()));
    await run("unzip", ["-q", zip, "-d", tmp]);
    const dir = path.join(tmp, name);
    const manifest = await fs.readFile(path.join(dir, "manifest-sha256.txt"), "utf8");
    expect(manifest).toMatch(/data\/record\.json/);
    expect(manifest).toMatch(/data\/premis\.xml/);
    expect(manifest).toMatch(/data\/access\/.*\.wav/);
    expect(manifest).toMatch(/data\/transfers\/.*-flat\.wav/);
    // coreutils sha256sum, outside the project, checks every line.
    const { stdout } = await run("sha256sum", ["-c", "manifest-sha256.txt"], { cwd: dir });
    expect(
      stdout
        .trim()
        .split("\n")
        .every((l) => l.endsWith(": OK")),
    ).toBe(true);
    const record = JSON.parse(await fs.readFile(path.join(dir, "data", "record.json"), "utf8"));
    expect(record.disc.shelfMark).toBe(`EX-${tag}`);
    expect(record.events.length).toBeGreaterThan(5);
  });

  it("packages only approved discs, and only for curators and admins", async () => {
    const { discId: open } = await assignedDisc(c, `NA-${tag}`, ["A"]);
    const refused = await api(`/api/discs/${open}/export?format=zip`, { cookie: c.curator });
    expect(refused.status).toBe(409);
    expect((await api(`/api/discs/${discId}/export?format=json`, { cookie: c.engineer })).status).toBe(403);
  });
});
