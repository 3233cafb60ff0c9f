// Another site cannot act as a signed-in person: a page served from another loopback port
// (same site as the app for SameSite=Lax, so the session cookie goes along) auto-submits
// a text/plain form whose body is JSON, to create an accession. The app refuses it and
// nothing is created. Also: sign-in's `next` never leaves the app, and every page of the
// lab loads under the Content-Security-Policy without a violation.
import { createServer, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import type { Browser } from "playwright-core";
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { can } from "@/lib/auth/permissions";
import { navItems } from "@/lib/navigation";
import { appUrl } from "../support/app";
import { cspViolations, launchBrowser, screenshot, SignInPage } from "../support/browser";
import { testDb } from "../support/db";

let browser: Browser;
let evil: Server;
let evilUrl: string;
const identifier = `CSRF-${Date.now().toString(36)}`;
const archivist = demoAccounts.find((a) => a.role === "archivist")!;

/** The hostile page: a form whose one field's name and value together spell a JSON body. */
function attackPage(): string {
  const json = `{"identifier":"${identifier}","source":"Another site","receivedOn":"2026-12-01","x":"`;
  const attr = (s: string) => s.replace(/&/g, "&amp;").replace(/"/g, "&quot;");
  return `<!doctype html><html><body>
<form id="f" method="POST" action="${appUrl}/api/accessions" enctype="text/plain">
<input type="hidden" name="${attr(json)}" value="${attr('"}')}">
</form>
<script>document.getElementById("f").submit();</script>
</body></html>`;
}

beforeAll(async () => {
  browser = await launchBrowser();
  evil = createServer((req, res) => {
    res.writeHead(200, { "content-type": "text/html; charset=utf-8" });
    res.end(
      req.url === "/attack.html"
        ? attackPage()
        : `<!doctype html><html><body><iframe src="${appUrl}/sign-in" width="800" height="600"></iframe></body></html>`,
    );
  });
  await new Promise<void>((resolve) => evil.listen(0, "127.0.0.1", resolve));
  evilUrl = `http://127.0.0.1:${(evil.address() as AddressInfo).port}`;
});

afterAll(async () => {
  await browser?.close();
  await new Promise((r) => evil?.close(r));
  await testDb.destroy();
});

async function signedIn(email: string, password: string) {
  const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
  const page = await context.newPage();
  await (await new SignInPage(page).open()).signIn(email, password);
  await page.waitForURL(`${appUrl}/`);
  return { context, page };
}

describe("a page on another site", () => {
  it("cannot make a signed-in browser create an accession with a text/plain form post", async () => {
    const { context, page } = await signedIn(archivist.email, archivist.password);
    // The browser does hold a live session for the app.
    expect((await context.cookies(appUrl)).some((c) => c.name === "next-auth.session-token")).toBe(true);
    const answer = page.waitForResponse(
      (r) => r.url() === `${appUrl}/api/accessions` && r.request().method() === "POST",
    );
    await page.goto(`${evilUrl}/attack.html`);
    const res = await answer;
    // The browser said where the post came from, and sent the session cookie (same site).
    expect(res.request().headers()["origin"]).toBe(evilUrl);
    expect((await res.request().allHeaders())["cookie"]).toMatch(/next-auth\.session-token=/);
    expect(res.status()).toBe(403);
    expect((await res.json()).error.code).toBe("cross_site");
    await screenshot(page, "cross-site-refused");
    const row = await testDb
      .selectFrom("accessions")
      .select(sql<number>`count(*)::int`.as("n"))
      .where("identifier", "=", identifier)
      .executeTakeFirstOrThrow();
    expect(row.n).toBe(0);
    await context.close();
  });
});

describe("sign-in's next", () => {
  for (const next of ["/%5Cevil.example/x", "/%09/evil.example", "/%5C/evil.example", "//evil.example"]) {
    it(`stays on the app for next=${next}`, async () => {
      const context = await browser.newContext();
      const page = await context.newPage();
      await page.goto(`${appUrl}/sign-in?next=${next}`);
      await new SignInPage(page).signIn(archivist.email, archivist.password);
      await page.waitForURL(`${appUrl}/`);
      await page.getByTestId("lab-nav").waitFor();
      expect(new URL(page.url()).origin).toBe(appUrl);
      await context.close();
    });
  }

  it("still takes a person to the page they asked for", async () => {
    const context = await browser.newContext();
    const page = await context.newPage();
    await page.goto(`${appUrl}/catalogue?q=Harbour`);
    await page.waitForURL(/\/sign-in\?next=/);
    await new SignInPage(page).signIn(archivist.email, archivist.password);
    await page.waitForURL(/\/catalogue\?(.*&)?q=Harbour/);
    expect(new URL(page.url()).origin).toBe(appUrl);
    await context.close();
  });
});

describe("the lab's pages under the Content-Security-Policy", () => {
  for (const account of demoAccounts.filter((a) => a.role !== "archivist")) {
    it(`load every page of the ${account.role}'s navigation without a violation`, async () => {
      const { context, page } = await signedIn(account.email, account.password);
      const errors: string[] = [];
      page.on("pageerror", (e) => errors.push(e.message));
      const extra =
        account.role === "admin"
          ? ["/catalogue/new", "/catalogue/import", "/catalogue/accessions", "/curves/workbench"]
          : [];
      for (const href of [
        ...navItems.filter((i) => can(account.role, i.action)).map((i) => i.href),
        ...extra,
      ]) {
        const res = await page.goto(`${appUrl}${href}`);
        expect(res?.status(), href).toBeLessThan(400);
        expect(res?.headers()["content-security-policy"], href).toMatch(/'nonce-/);
        await page.waitForLoadState("networkidle");
        // Hydrated: the client's own scripts ran (the nav is a client component's output).
        await page.getByTestId("lab-nav").waitFor();
      }
      expect(errors).toEqual([]);
      expect(cspViolations).toEqual([]);
      await context.close();
    });
  }

  it("cannot be framed by another site", async () => {
    const context = await browser.newContext();
    const page = await context.newPage();
    const blocked = new Promise<string>((resolve) =>
      page.on(
        "console",
        (m) => /frame-ancestors|X-Frame-Options|refused to connect/i.test(m.text()) && resolve(m.text()),
      ),
    );
    await page.goto(`${evilUrl}/frame.html`);
    await expect(
      Promise.race([blocked, new Promise((r) => setTimeout(() => r("no report"), 10_000))]),
    ).resolves.toMatch(/frame-ancestors|X-Frame-Options/i);
    const frame = page.frames().find((f) => f !== page.mainFrame());
    expect(
      await frame
        ?.locator("[data-testid=sign-in-form]")
        .count()
        .catch(() => 0),
    ).not.toBe(1);
    await context.close();
    // That refusal is the policy at work, not a page breaking it.
    for (let i = cspViolations.length - 1; i >= 0; i--)
      if (/frame-ancestors/.test(cspViolations[i])) cspViolations.splice(i, 1);
  });
});
