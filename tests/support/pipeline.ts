// Arranging a side's work through the real API, as the people of the lab would:
// used by the integration tests of the bench, review and exports.
import { createHash } from "node:crypto";
import { WaveFile } from "wavefile";
import { expect } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { api, signInCookie } from "./app";
import { testDb } from "./db";
import { testSignal } from "./wav-corpus";

export type LabCookies = Record<"archivist" | "engineer" | "curator", string>;

export async function labCookies(): Promise<LabCookies> {
  const out = {} as LabCookies;
  for (const role of ["archivist", "engineer", "curator"] as const) {
    const a = demoAccounts.find((x) => x.role === role)!;
    out[role] = await signInCookie(a.email, a.password);
  }
  return out;
}

/** The id of the demo person of that role. */
export async function demoUserId(role: (typeof demoAccounts)[number]["role"]): Promise<string> {
  const email = demoAccounts.find((a) => a.role === role)!.email;
  return (await testDb.selectFrom("users").select("id").where("email", "=", email).executeTakeFirstOrThrow())
    .id;
}

/** A new accession made by the archivist through the API; its id. */
export async function newAccession(archivist: string, identifier: string, source: string): Promise<string> {
  const acc = await api("/api/accessions", {
    cookie: archivist,
    method: "POST",
    body: { identifier, source, receivedOn: "2026-11-30" },
  });
  expect(acc.status).toBe(201);
  return acc.body.accession.id as string;
}

export async function until<T>(
  what: string,
  probe: () => Promise<T | undefined> | T | undefined,
  timeoutMs = 60_000,
): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const v = await probe();
    if (v !== undefined) return v;
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error(`timed out waiting for ${what}`);
}

/** A catalogued disc with the given sides, assigned to the demo engineer (or to the engineer named). */
export async function assignedDisc(
  c: LabCookies,
  shelfMark: string,
  sides: string[],
  engineerEmail = demoAccounts.find((a) => a.role === "engineer")!.email,
): Promise<{ discId: string; sideIds: string[] }> {
  const engineerId = (
    await testDb.selectFrom("users").select("id").where("email", "=", engineerEmail).executeTakeFirstOrThrow()
  ).id;
  const acc = await api("/api/accessions", {
    cookie: c.archivist,
    method: "POST",
    body: { identifier: `ACC-${shelfMark}`, source: "Integration tests", receivedOn: "2026-11-30" },
  });
  expect(acc.status).toBe(201);
  const disc = await api("/api/discs", {
    cookie: c.archivist,
    method: "POST",
    body: {
      accessionId: acc.body.accession.id,
      shelfMark,
      labelName: "Varrowby",
      catalogueNumber: "VB 2211",
      format: "shellac_78",
      nominalSpeedRpm: 78,
      groove: "coarse",
      cut: "lateral",
      sides: sides.map((designation) => ({ designation, title: "Copper Meadow Serenade" })),
    },
  });
  expect(disc.status).toBe(201);
  expect(
    (
      await api("/api/assignments", {
        cookie: c.archivist,
        method: "POST",
        body: { engineerId, discIds: [disc.body.disc.id] },
      })
    ).status,
  ).toBe(200);
  return { discId: disc.body.disc.id, sideIds: disc.body.disc.sides.map((s: { id: string }) => s.id) };
}

export const riaaOverrides = {
  turnover: { unit: "us", value: 318 },
  shelf: { unit: "us", value: 3180 },
  rolloff: { unit: "us", value: 75 },
};

export async function chooseCurve(
  c: LabCookies,
  sideIds: string[],
  overrides: object = riaaOverrides,
  rationale = "Standard curve as the test's stand-in.",
) {
  const r = await api("/api/curve-choices", {
    cookie: c.engineer,
    method: "POST",
    body: { sideIds, overrides, cutSpeedRpm: 78, transferSpeedRpm: 78, rationale, evidenceKind: "other" },
  });
  expect(r.status).toBe(201);
}

/** A flat transfer written by a general-purpose WAV writer (wavefile): `seconds` of 44.1 kHz 24-bit stereo. */
export function flatTransfer(seconds = 3, seed = 7): Uint8Array {
  const frames = Math.round(44_100 * seconds);
  const [l, r] = testSignal(frames, 2, seed, 0.5);
  const wav = new WaveFile();
  const full = 2 ** 23 - 1;
  wav.fromScratch(2, 44_100, "24", [
    Array.from(l, (v) => Math.round(v * full)),
    Array.from(r, (v) => Math.round(v * full)),
  ]);
  return wav.toBuffer();
}

/** Starts an upload as the browser does: the server answers the upload's id, its part size and the first part URLs. */
export async function startUpload(cookie: string, sideId: string, fileName: string, bytes: number) {
  const start = await api("/api/uploads", { cookie, method: "POST", body: { sideId, fileName, bytes } });
  expect(start.status).toBe(201);
  const { uploadId, partSize, urls } = start.body as {
    uploadId: string;
    partSize: number;
    urls: { partNumber: number; url: string }[];
  };
  // The key is the server's own; the tests read it from the database to look at the bucket.
  const { object_key: key } = await testDb
    .selectFrom("uploads")
    .select("object_key")
    .where("id", "=", uploadId)
    .executeTakeFirstOrThrow();
  return { uploadId, partSize, urls, key };
}

/** PUTs each slice of `bytes` to its presigned part URL, as the browser does; answers the parts with their ETags. */
export async function sendParts(
  bytes: Uint8Array,
  partSize: number,
  urls: { partNumber: number; url: string }[],
) {
  const parts: { partNumber: number; etag: string }[] = [];
  for (const { partNumber, url } of urls) {
    const put = await fetch(url, {
      method: "PUT",
      body: Buffer.from(bytes.subarray((partNumber - 1) * partSize, partNumber * partSize)),
    });
    expect(put.status).toBe(200);
    parts.push({ partNumber, etag: put.headers.get("etag")! });
  }
  return parts;
}

export const transferDetails = {
  stylusSize: "3.0 mil",
  stylusShape: "truncated elliptical",
  measuredSpeedRpm: 78.26,
  chain: "Turntable, flat preamp, converter at 44.1 kHz/24",
};

export const sha256Of = (bytes: Uint8Array) => createHash("sha256").update(bytes).digest("hex");

/** Uploads through presigned multipart URLs as the browser does, then asks the server to accept it. */
export async function uploadTransfer(
  c: LabCookies,
  sideId: string,
  bytes: Uint8Array,
  name: string,
  opts: { sha256?: string; confirmDuplicate?: boolean; details?: Record<string, unknown> } = {},
) {
  const { uploadId, partSize, urls, key } = await startUpload(c.engineer, sideId, name, bytes.length);
  const parts = await sendParts(bytes, partSize, urls);
  const sha256 = opts.sha256 ?? sha256Of(bytes);
  // Test files share a few seeded signals across their sides, so by default the engineer's
  // confirmation of a file another side already has is given; the check itself has its
  // own test (tests/integration/catalogue-table.test.ts), which does not give it.
  const done = await api("/api/uploads/complete", {
    cookie: c.engineer,
    method: "POST",
    body: {
      uploadId,
      parts,
      sha256,
      bytes: bytes.length,
      ...transferDetails,
      ...opts.details,
      confirmDuplicate: opts.confirmDuplicate ?? true,
    },
  });
  return { key, uploadId, done };
}

export async function renderAndWait(
  c: LabCookies,
  sideId: string,
  channelMode = "sum",
): Promise<{ id: string; sha256: string; error: string | null; status: string }> {
  const queued = await api("/api/renders", {
    cookie: c.engineer,
    method: "POST",
    body: { sideId, channelMode, bitDepth: 24 },
  });
  expect(queued.status).toBe(202);
  return until(
    "the render",
    async () => {
      const list = await api(`/api/sides/${sideId}/renders`, { cookie: c.curator });
      const r = list.body.renders.find((x: { id: string }) => x.id === queued.body.renderId);
      if (r?.status === "failed") throw new Error(`render failed: ${r.error}`);
      return r?.status === "done" ? r : undefined;
    },
    90_000,
  );
}

/** Asks for a fixity check of the disc now and waits until every object it queued has a result since. */
export async function fixityNow(c: LabCookies, discId: string, sideIds: string[]) {
  const asked = await api("/api/fixity", { cookie: c.curator, method: "POST", body: { discId } });
  expect(asked.status).toBe(202);
  expect(asked.body.queued).toBeGreaterThan(0);
  return until("fixity checks", async () => {
    const recent: { outcome: string; objectKind: string }[] = [];
    for (const sideId of sideIds) {
      const checks = await api(`/api/sides/${sideId}/fixity`, { cookie: c.curator });
      // Only results recorded after the request (the app, the database and the tests share one clock).
      recent.push(
        ...checks.body.checks.filter(
          (x: { checkedAt: string }) => new Date(x.checkedAt).getTime() >= asked.body.askedAt,
        ),
      );
    }
    return recent.length >= asked.body.queued ? recent : undefined;
  });
}

/** A one-side disc taken all the way to approval by two different people. */
export async function approvedDisc(
  c: LabCookies,
  shelfMark: string,
): Promise<{ discId: string; sideId: string }> {
  const { discId, sideIds } = await assignedDisc(c, shelfMark, ["A"]);
  await chooseCurve(c, sideIds);
  const up = await uploadTransfer(c, sideIds[0], flatTransfer(2, 11), `${shelfMark}.wav`);
  expect(up.done.status).toBe(201);
  await renderAndWait(c, sideIds[0]);
  expect(
    (
      await api(`/api/sides/${sideIds[0]}/transition`, {
        cookie: c.engineer,
        method: "POST",
        body: { to: "in_review" },
      })
    ).status,
  ).toBe(200);
  await fixityNow(c, discId, sideIds);
  const ok = await api(`/api/sides/${sideIds[0]}/review`, {
    cookie: c.curator,
    method: "POST",
    body: { decision: "approved" },
  });
  expect(ok.status).toBe(200);
  return { discId, sideId: sideIds[0] };
}
