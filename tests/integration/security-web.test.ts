// The web side of the hardening, against the running test app: another site cannot act as a
// signed-in person, pages and API answers carry their security headers, sessions end on the
// server when they should, admins do not see live single-use links, and odd text neither
// breaks a request, an export nor a render.
import { execFile } from "node:child_process";
import { promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "@/db";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { bufferSource, readWavHeader } from "@/lib/audio";
import { hashPassword } from "@/lib/auth/password";
import { hiddenToken } from "@/lib/mail/redact";
import { changeRole, setActive } from "@/lib/people/accounts";
import { invitePerson } from "@/lib/people/invitations";
import { requestPasswordReset, resetPassword } from "@/lib/people/password-resets";
import { api, appUrl, type Json, linkIn, sameOrigin, signInCookie, uniqueEmail } from "../support/app";
import { testDb } from "../support/db";
import {
  chooseCurve,
  flatTransfer,
  type LabCookies,
  labCookies,
  renderAndWait,
  uploadTransfer,
} from "../support/pipeline";

const run = promisify(execFile);
const tag = Date.now().toString(36);
const evilOrigin = "http://127.0.0.1:9";
let c: LabCookies;
let adminCookie: string;

beforeAll(async () => {
  c = await labCookies();
  const admin = demoAccounts.find((a) => a.role === "admin")!;
  adminCookie = await signInCookie(admin.email, admin.password);
});

afterAll(async () => {
  await db.destroy();
  await testDb.destroy();
});

const accessionBody = (identifier: string) =>
  JSON.stringify({ identifier, source: "Security tests", receivedOn: "2026-12-01" });

async function accessionCount(identifier: string): Promise<number> {
  const row = await testDb
    .selectFrom("accessions")
    .select(sql<number>`count(*)::int`.as("n"))
    .where("identifier", "=", identifier)
    .executeTakeFirstOrThrow();
  return row.n;
}

/** A raw request, headers exactly as given (no Origin added). */
async function raw(
  pathname: string,
  init: { method?: string; headers?: Record<string, string>; body?: string } = {},
) {
  const res = await fetch(`${appUrl}${pathname}`, {
    method: init.method ?? "GET",
    headers: init.headers,
    body: init.body,
    redirect: "manual",
  });
  const text = await res.text();
  let body: Json = text;
  try {
    body = JSON.parse(text);
  } catch {
    /* not JSON */
  }
  return { status: res.status, headers: res.headers, body };
}

async function makeUser(role: "archivist" | "engineer" | "curator") {
  const email = uniqueEmail(`sec-${role}`);
  const password = "a good long passphrase";
  const row = await testDb
    .insertInto("users")
    .values({ email, name: `Security ${role}`, role, password_hash: await hashPassword(password) })
    .returning("id")
    .executeTakeFirstOrThrow();
  return { id: row.id, email, password };
}

async function adminActor() {
  return testDb
    .selectFrom("users")
    .select(["id", "email", "name", "role"])
    .where("role", "=", "admin")
    .where("active", "=", true)
    .orderBy("created_at")
    .executeTakeFirstOrThrow();
}

describe("cross-site requests", () => {
  it("refuses a signed-in person's JSON post whose Origin is another site, and creates nothing", async () => {
    const identifier = `XS-${tag}-origin`;
    const res = await raw("/api/accessions", {
      method: "POST",
      headers: { origin: evilOrigin, cookie: c.archivist, "content-type": "application/json" },
      body: accessionBody(identifier),
    });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe("cross_site");
    expect(res.body.error.message).toMatch(/another site/);
    expect(await accessionCount(identifier)).toBe(0);
    // The same request from the app's own origin goes through: the refusal was the Origin's.
    const ok = await raw("/api/accessions", {
      method: "POST",
      headers: { ...sameOrigin, cookie: c.archivist, "content-type": "application/json" },
      body: accessionBody(identifier),
    });
    expect(ok.status).toBe(201);
  });

  it("refuses a post with no Origin, Sec-Fetch-Site or Referer, and takes one whose Referer is the app", async () => {
    const identifier = `XS-${tag}-none`;
    const none = await raw("/api/accessions", {
      method: "POST",
      headers: { cookie: c.archivist, "content-type": "application/json" },
      body: accessionBody(identifier),
    });
    expect(none.status).toBe(403);
    expect(none.body.error.message).toMatch(/did not say where it came from/);
    const crossFetch = await raw("/api/accessions", {
      method: "POST",
      headers: { "sec-fetch-site": "cross-site", cookie: c.archivist, "content-type": "application/json" },
      body: accessionBody(identifier),
    });
    expect(crossFetch.status).toBe(403);
    expect(await accessionCount(identifier)).toBe(0);
    const byReferer = await raw("/api/accessions", {
      method: "POST",
      headers: {
        referer: `${appUrl}/catalogue/accessions`,
        cookie: c.archivist,
        "content-type": "application/json",
      },
      body: accessionBody(identifier),
    });
    expect(byReferer.status).toBe(201);
  });

  it("refuses JSON sent as text/plain (what a cross-site form can send) with 415, even from the app's origin", async () => {
    const identifier = `XS-${tag}-plain`;
    const res = await raw("/api/accessions", {
      method: "POST",
      headers: { ...sameOrigin, cookie: c.archivist, "content-type": "text/plain" },
      body: accessionBody(identifier),
    });
    expect(res.status).toBe(415);
    expect(res.body.error.message).toMatch(/application\/json, not text\/plain/);
    expect(await accessionCount(identifier)).toBe(0);
  });

  it("refuses a form post to a page (a server action) from another site", async () => {
    const res = await raw("/people", {
      method: "POST",
      headers: {
        origin: evilOrigin,
        cookie: adminCookie,
        "next-action": "0".repeat(42),
        "content-type": "text/plain;charset=UTF-8",
      },
      body: "[]",
    });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe("cross_site");
  });

  it("leaves next-auth's own endpoints to their CSRF token: signing in still works", async () => {
    const u = await makeUser("archivist");
    const cookie = await signInCookie(u.email, u.password);
    expect((await api("/api/me", { cookie })).status).toBe(200);
  });
});

describe("security headers", () => {
  function expectCommonHeaders(h: Headers) {
    expect(h.get("x-frame-options")).toBe("DENY");
    expect(h.get("x-content-type-options")).toBe("nosniff");
    expect(h.get("referrer-policy")).toBe("same-origin");
    expect(h.get("content-security-policy")).toMatch(/frame-ancestors 'none'/);
  }

  it("gives a page its headers and a fresh script nonce that its scripts carry", async () => {
    const first = await fetch(`${appUrl}/sign-in`);
    expect(first.status).toBe(200);
    expectCommonHeaders(first.headers);
    const csp = first.headers.get("content-security-policy")!;
    const nonce = csp.match(/'nonce-([^']+)'/)?.[1];
    expect(nonce).toBeTruthy();
    expect(csp).not.toContain("'unsafe-eval'");
    expect(csp).toContain(
      `connect-src 'self' ${new URL(process.env.S3_ENDPOINT ?? "http://127.0.0.1:55421").origin}`,
    );
    const html = await first.text();
    const scripts = [...html.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
    expect(scripts.length).toBeGreaterThan(0);
    for (const s of scripts) expect(s).toContain(`nonce="${nonce}"`);
    const second = await fetch(`${appUrl}/sign-in`);
    expect(second.headers.get("content-security-policy")).not.toContain(nonce);
  });

  it("gives a signed-in page the same headers", async () => {
    const res = await fetch(`${appUrl}/catalogue`, { headers: { cookie: c.archivist } });
    expect(res.status).toBe(200);
    expectCommonHeaders(res.headers);
    expect(res.headers.get("content-security-policy")).toMatch(/script-src 'self' 'nonce-/);
  });

  it("gives an API answer the headers, with a policy that loads nothing", async () => {
    const res = await fetch(`${appUrl}/api/me`, { headers: { cookie: c.curator } });
    expect(res.status).toBe(200);
    expectCommonHeaders(res.headers);
    expect(res.headers.get("content-security-policy")).toMatch(/default-src 'none'/);
  });

  it("marks API answers with personal data no-store, refusals too", async () => {
    for (const p of ["/api/me", "/api/discs", "/api/users", "/api/outbox"]) {
      const res = await fetch(`${appUrl}${p}`, { headers: { cookie: adminCookie } });
      expect(res.status, p).toBe(200);
      expect(res.headers.get("cache-control"), p).toBe("no-store");
    }
    expect((await fetch(`${appUrl}/api/me`)).headers.get("cache-control")).toBe("no-store");
  });
});

describe("sessions end on the server", () => {
  async function signOut(cookie: string): Promise<void> {
    const csrf = await fetch(`${appUrl}/api/auth/csrf`, { headers: { cookie } });
    const { csrfToken } = (await csrf.json()) as { csrfToken: string };
    const res = await fetch(`${appUrl}/api/auth/signout`, {
      method: "POST",
      redirect: "manual",
      headers: { ...sameOrigin, cookie, "content-type": "application/x-www-form-urlencoded" },
      body: new URLSearchParams({ csrfToken, callbackUrl: `${appUrl}/sign-in`, json: "true" }),
    });
    expect(res.status).toBeLessThan(400);
    expect(res.headers.getSetCookie().join(";")).toMatch(/next-auth\.session-token=;/);
  }

  it("a copied cookie is dead after its person signs out", async () => {
    const u = await makeUser("archivist");
    const cookie = await signInCookie(u.email, u.password);
    const copy = cookie;
    expect((await api("/api/me", { cookie: copy })).status).toBe(200);
    await signOut(cookie);
    expect((await api("/api/me", { cookie: copy })).status).toBe(401);
    expect(
      (
        await api("/api/accessions", {
          cookie: copy,
          method: "POST",
          body: { identifier: `SO-${tag}`, source: "x", receivedOn: "2026-12-01" },
        })
      ).status,
    ).toBe(401);
    // Signing in again works, with a new cookie.
    expect((await api("/api/me", { cookie: await signInCookie(u.email, u.password) })).status).toBe(200);
  });

  it("a copied cookie is dead after a password reset", async () => {
    const u = await makeUser("curator");
    const cookie = await signInCookie(u.email, u.password);
    expect((await api("/api/me", { cookie })).status).toBe(200);
    await requestPasswordReset({ email: u.email });
    const msg = await testDb
      .selectFrom("outbox")
      .select("body_text")
      .where("to_address", "=", u.email)
      .orderBy("created_at", "desc")
      .executeTakeFirstOrThrow();
    const token = linkIn(msg.body_text, "/reset/").split("/reset/")[1];
    await resetPassword({ token, password: "a brand new passphrase", confirm: "a brand new passphrase" });
    expect((await api("/api/me", { cookie })).status).toBe(401);
    expect(
      (await api("/api/me", { cookie: await signInCookie(u.email, "a brand new passphrase") })).status,
    ).toBe(200);
  });

  it("a copied cookie is dead after deactivation, and stays dead after reactivation", async () => {
    const u = await makeUser("engineer");
    const cookie = await signInCookie(u.email, u.password);
    expect((await api("/api/me", { cookie })).status).toBe(200);
    const admin = await adminActor();
    await setActive(admin, { userId: u.id, active: "false" });
    expect((await api("/api/me", { cookie })).status).toBe(401);
    await setActive(admin, { userId: u.id, active: "true" });
    expect((await api("/api/me", { cookie })).status).toBe(401);
  });

  it("a copied cookie is dead after a role change; signing in again gives the new role", async () => {
    const u = await makeUser("archivist");
    const cookie = await signInCookie(u.email, u.password);
    expect((await api("/api/me", { cookie })).body.user.role).toBe("archivist");
    await changeRole(await adminActor(), { userId: u.id, role: "curator" });
    expect((await api("/api/me", { cookie })).status).toBe(401);
    expect((await api("/api/me", { cookie: await signInCookie(u.email, u.password) })).body.user.role).toBe(
      "curator",
    );
  });
});

describe("mail as the app shows it", () => {
  it("hides live reset and invitation links from the admin in GET /api/outbox, and sends them unchanged", async () => {
    const u = await makeUser("curator");
    await requestPasswordReset({ email: u.email });
    const invitee = uniqueEmail("sec-invitee");
    expect((await api("/api/outbox", { cookie: adminCookie })).status).toBe(200);
    await invitePerson(await adminActor(), { email: invitee, role: "engineer" });
    const listed = await api("/api/outbox", { cookie: adminCookie });
    expect(listed.status).toBe(200);
    for (const [to, prefix] of [
      [u.email, "/reset/"],
      [invitee, "/invite/"],
    ] as const) {
      const stored = await testDb
        .selectFrom("outbox")
        .select(["id", "body_text"])
        .where("to_address", "=", to)
        .orderBy("created_at", "desc")
        .executeTakeFirstOrThrow();
      const token = linkIn(stored.body_text, prefix).split(prefix)[1];
      expect(token.length).toBeGreaterThan(20);
      const shown = listed.body.messages.find((m: { id: string }) => m.id === stored.id);
      expect(shown.text).not.toContain(token);
      expect(shown.text).toContain(`${prefix}${hiddenToken}`);
      expect(JSON.stringify(listed.body)).not.toContain(token);
    }
  });
});

describe("odd text", () => {
  it("answers a NUL in a search with 422 naming q", async () => {
    const res = await raw("/api/discs?q=%00", { headers: { cookie: c.archivist } });
    expect(res.status).toBe(422);
    expect(res.body.error.fields.q).toBeDefined();
  });

  it("answers a NUL in a text field with 422 naming the field, and stores nothing", async () => {
    const identifier = `NUL-${tag}\u0000x`;
    const res = await api("/api/accessions", {
      cookie: c.archivist,
      method: "POST",
      body: { identifier, source: "Security tests", receivedOn: "2026-12-01" },
    });
    expect(res.status).toBe(422);
    expect(res.body.error.fields.identifier).toBeDefined();
    const acc = await api("/api/accessions", {
      cookie: c.archivist,
      method: "POST",
      body: { identifier: `NUL-${tag}`, source: "Security tests", receivedOn: "2026-12-01" },
    });
    expect(acc.status).toBe(201);
    const disc = await api("/api/discs", {
      cookie: c.archivist,
      method: "POST",
      body: {
        accessionId: acc.body.accession.id,
        shelfMark: `NUL-${tag}`,
        labelName: "Varrowby",
        format: "shellac_78",
        nominalSpeedRpm: 78,
        groove: "coarse",
        cut: "lateral",
        sides: [{ designation: "A", title: "Copper\u0000Meadow" }],
      },
    });
    expect(disc.status).toBe(422);
    expect(disc.body.error.fields["sides.0.title"]).toBeDefined();
  });

  it("exports PREMIS that is well-formed XML when a stored title holds U+000B", async () => {
    const acc = await api("/api/accessions", {
      cookie: c.archivist,
      method: "POST",
      body: { identifier: `VT-${tag}`, source: "Security tests", receivedOn: "2026-12-01" },
    });
    const disc = await api("/api/discs", {
      cookie: c.archivist,
      method: "POST",
      body: {
        accessionId: acc.body.accession.id,
        shelfMark: `VT-${tag}`,
        labelName: "Varrowby\u000bRecords",
        format: "shellac_78",
        nominalSpeedRpm: 78,
        groove: "coarse",
        cut: "lateral",
        sides: [{ designation: "A", title: "Copper\u000bMeadow Serenade" }],
      },
    });
    expect(disc.status).toBe(201);
    const stored = await testDb
      .selectFrom("sides")
      .select("title")
      .where("disc_id", "=", disc.body.disc.id)
      .executeTakeFirstOrThrow();
    expect(stored.title).toContain("\u000b");
    const res = await fetch(`${appUrl}/api/discs/${disc.body.disc.id}/export?format=premis`, {
      headers: { cookie: c.curator },
    });
    expect(res.status).toBe(200);
    const xml = await res.text();
    const dir = await fs.mkdtemp(path.join(os.tmpdir(), "rillbook-premis-"));
    const file = path.join(dir, "vt.xml");
    await fs.writeFile(file, xml);
    const { stderr } = await run("xmllint", ["--noout", file]);
    expect(stderr).toBe("");
    expect(xml).toContain("Copper\ufffdMeadow Serenade");
  });

  it("renders a disc labelled Pathé, with the label transliterated in the bext Description and in full in the iXML chunk", async () => {
    const engineerId = (
      await testDb
        .selectFrom("users")
        .select("id")
        .where("email", "=", demoAccounts.find((a) => a.role === "engineer")!.email)
        .executeTakeFirstOrThrow()
    ).id;
    const acc = await api("/api/accessions", {
      cookie: c.archivist,
      method: "POST",
      body: { identifier: `PA-${tag}`, source: "Security tests", receivedOn: "2026-12-01" },
    });
    const disc = await api("/api/discs", {
      cookie: c.archivist,
      method: "POST",
      body: {
        accessionId: acc.body.accession.id,
        shelfMark: `PA-${tag}`,
        labelName: "Pathé Frères",
        catalogueNumber: "Ø 1207",
        format: "shellac_78",
        nominalSpeedRpm: 78,
        groove: "coarse",
        cut: "lateral",
        sides: [{ designation: "A", title: "Chanson de l’Œuvre" }],
      },
    });
    expect(disc.status).toBe(201);
    const sideId = disc.body.disc.sides[0].id as string;
    expect(
      (
        await api("/api/assignments", {
          cookie: c.archivist,
          method: "POST",
          body: { engineerId, discIds: [disc.body.disc.id] },
        })
      ).status,
    ).toBe(200);
    await chooseCurve(c, [sideId]);
    const up = await uploadTransfer(c, sideId, flatTransfer(2, 5), "pathe.wav");
    expect(up.done.status).toBe(201);
    const render = await renderAndWait(c, sideId);
    expect(render.status).toBe("done");
    const link = await fetch(`${appUrl}/api/renders/${render.id}/download`, {
      headers: { cookie: c.curator },
      redirect: "manual",
    });
    expect(link.status).toBe(302);
    const file = new Uint8Array(await (await fetch(link.headers.get("location")!)).arrayBuffer());
    const header = await readWavHeader(bufferSource(file));
    expect(header.bext?.description).toBe(`PA-${tag} side A: Pathe Freres O 1207. Equalized access copy.`);
    // The full text where Unicode is allowed: the file's iXML chunk (UTF-8) and the render's record.
    const full = `PA-${tag} side A: Pathé Frères Ø 1207. Equalized access copy.`;
    expect(Buffer.from(file).toString("utf8")).toContain(`<NOTE>${full}</NOTE>`);
    const rendered = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("subject_id", "=", sideId)
      .where("kind", "=", "side.rendered")
      .executeTakeFirstOrThrow();
    expect((rendered.payload as { description: string }).description).toBe(full);
  }, 180_000);
});
