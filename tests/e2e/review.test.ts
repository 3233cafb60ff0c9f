// Review and audit end to end. Arranged through the API: the archivist catalogues a
// one-sided shellac disc and assigns it to Wen Okafor; Wen records a curve, uploads a
// flat transfer, has the access copy rendered and sends the side for review. In the
// browser the curator Della Prior opens it from the review queue and returns it with a
// reason; Wen (API) changes the curve to a preset, renders again and resubmits; a
// second curator (made directly in the database, signed in through the page) opens
// the review, runs "Check fixity now" and approves. The audit page's history of the
// disc then shows every step, and the disc page's timeline reads as fully. Screenshots
// "review", "audit" and "disc-timeline" land in storage/test/screenshots.
import type { Browser, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { hashPassword } from "@/lib/auth/password";
import { api, appUrl, signInCookie } from "../support/app";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";
import { testDb } from "../support/db";
import { makeWav } from "../support/make-wav";
import { renderAndWait as renderFor, uploadTransfer } from "../support/pipeline";

let browser: Browser;
const archivist = demoAccounts.find((a) => a.role === "archivist")!;
const engineer = demoAccounts.find((a) => a.role === "engineer")!;
const curator = demoAccounts.find((a) => a.role === "curator")!;
const run = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase();
const shelfMark = `E2E-R-${run}`;
const second = {
  email: `curator2-${run.toLowerCase()}@test.example`,
  password: "second-curator-pass-2026",
  name: `Nell Ashby ${run}`,
};
const returnReason =
  "Too much bass lift for this label and year: try the lab's RIAA preset and listen again around 1:10.";
const cookie = {} as Record<"archivist" | "engineer", string>;
let discId: string;
let sideId: string;

async function upload(sideId: string, bytes: Uint8Array, name: string) {
  const { done } = await uploadTransfer({ ...cookie, curator: "" }, sideId, bytes, name);
  expect(done.status).toBe(201);
  return done.body;
}

/** Asks the worker for an access copy and waits until it is done. */
async function renderAndWait(): Promise<string> {
  return (await renderFor({ ...cookie, curator: cookie.engineer }, sideId)).id;
}

async function submitForReview() {
  const sent = await api(`/api/sides/${sideId}/transition`, {
    cookie: cookie.engineer,
    method: "POST",
    body: { to: "in_review" },
  });
  expect(sent.status).toBe(200);
}

async function sideStatus(): Promise<string> {
  return (
    await testDb.selectFrom("sides").select("status").where("id", "=", sideId).executeTakeFirstOrThrow()
  ).status;
}

async function signIn(page: Page, email: string, password: string) {
  await (await new SignInPage(page).open()).signIn(email, password);
  await page.waitForURL(`${appUrl}/`);
}

beforeAll(async () => {
  browser = await launchBrowser();
  cookie.archivist = await signInCookie(archivist.email, archivist.password);
  cookie.engineer = await signInCookie(engineer.email, engineer.password);
  await testDb
    .insertInto("users")
    .values({
      email: second.email,
      name: second.name,
      role: "curator",
      password_hash: await hashPassword(second.password),
    })
    .execute();

  const engineers = await api("/api/engineers", { cookie: cookie.archivist });
  const wen = (engineers.body.engineers as { id: string; name: string }[]).find(
    (e) => e.name === engineer.name,
  )!;
  const acc = await api("/api/accessions", {
    cookie: cookie.archivist,
    method: "POST",
    body: { identifier: `E2E-REVIEW-${run}`, source: "Review end-to-end test", receivedOn: "2026-11-30" },
  });
  expect(acc.status).toBe(201);
  const disc = await api("/api/discs", {
    cookie: cookie.archivist,
    method: "POST",
    body: {
      accessionId: acc.body.accession.id,
      shelfMark,
      labelName: "Quillstone",
      catalogueNumber: `Q ${run}`,
      format: "shellac_78",
      nominalSpeedRpm: 78,
      groove: "coarse",
      cut: "lateral",
      sides: [
        {
          designation: "A",
          matrixNumber: `MR${run}`,
          take: "1",
          title: "Weir Mill Two-Step",
          performers: "The Tidewater Players",
        },
      ],
    },
  });
  expect(disc.status).toBe(201);
  discId = disc.body.disc.id;
  sideId = disc.body.disc.sides[0].id;
  expect(
    (
      await api("/api/assignments", {
        cookie: cookie.archivist,
        method: "POST",
        body: { engineerId: wen.id, discIds: [discId] },
      })
    ).status,
  ).toBeLessThan(300);

  const chosen = await api("/api/curve-choices", {
    cookie: cookie.engineer,
    method: "POST",
    body: {
      sideIds: [sideId],
      overrides: {
        turnover: { unit: "us", value: 318 },
        shelf: { unit: "us", value: 3180 },
        rolloff: { unit: "us", value: 75 },
      },
      cutSpeedRpm: 78,
      transferSpeedRpm: 78,
      rationale:
        "First pass with the microgroove time constants while the label's documentation is looked up.",
      evidenceKind: "other",
    },
  });
  expect(chosen.status).toBe(201);
  await upload(sideId, makeWav({ seconds: 6 }), `${shelfMark} A flat.wav`);
  await renderAndWait();
  await submitForReview();
  expect(await sideStatus()).toBe("in_review");
}, 180_000);

afterAll(async () => {
  await browser?.close();
  await testDb.destroy();
});

describe("review and audit", () => {
  it("a curator returns the side with a reason from the review page", async () => {
    const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const page = await context.newPage();
    await signIn(page, curator.email, curator.password);

    // The queue lists the side; it opens the review page.
    await page.goto(`${appUrl}/review`);
    const table = page.getByTestId("review-table");
    const row = table.getByRole("row").filter({ hasText: shelfMark });
    await row.waitFor();
    await expect(row.innerText()).resolves.toMatch(/Wen Okafor/);
    await row.getByTestId("review-link").click();
    await page.waitForURL(`${appUrl}/review/${sideId}`);

    // Everything on one screen: record, cautions, curve, files, players.
    await page.getByTestId("review-title").getByText(shelfMark).waitFor();
    await page
      .getByTestId("handling-cautions")
      .getByText(/Shellac is brittle/)
      .waitFor();
    await page
      .getByTestId("curve-rationale")
      .getByText(/microgroove time constants/)
      .waitFor();
    await page.getByTestId("response-plot").waitFor();
    const transfers = await api(`/api/sides/${sideId}/transfers`, { cookie: cookie.engineer });
    await expect(page.getByTestId("review-transfer-sha256").innerText()).resolves.toContain(
      transfers.body.transfers[0].sha256,
    );
    await expect(page.getByTestId("review-render-sha256").innerText()).resolves.toMatch(/[0-9a-f]{64}/);
    await expect(page.getByTestId("access-copy-player").getAttribute("src")).resolves.toMatch(
      /^\/api\/renders\/[0-9a-f-]{36}\/download$/,
    );
    await page.getByTestId("audition-panel").waitFor();
    await page
      .getByTestId("audition-candidates")
      .getByText(/Chosen: Own values/)
      .waitFor();

    // A return needs a reason: refused in the page first, then sent.
    await page.getByTestId("review-return").click();
    await page.getByTestId("review-reason-error").waitFor();
    await page.getByTestId("review-reason").fill(returnReason);
    await page.getByTestId("review-return").click();
    await page
      .getByTestId("review-decided")
      .getByText(/Returned to the engineer/)
      .waitFor();
    await page.getByTestId("review-history").getByText(returnReason).waitFor();
    expect(await sideStatus()).toBe("returned");
    await context.close();
  }, 120_000);

  it("the engineer changes the curve, renders again and resubmits (API)", async () => {
    const presets = await api("/api/curves/presets", { cookie: cookie.engineer });
    const riaa = (presets.body.presets as { id: string; name: string; currentVersion: number }[]).find((p) =>
      /^RIAA/.test(p.name),
    )!;
    expect(riaa).toBeTruthy();
    const chosen = await api("/api/curve-choices", {
      cookie: cookie.engineer,
      method: "POST",
      // The rolloff is sent as −13.7 dB: the same attenuation as 13.7, kept and shown as 13.7.
      body: {
        sideIds: [sideId],
        presetId: riaa.id,
        presetVersion: riaa.currentVersion,
        overrides: { rolloff: { unit: "db10k", value: -13.7 } },
        cutSpeedRpm: 78,
        transferSpeedRpm: 78,
        rationale:
          "Returned for too much bass: the lab's RIAA preset, as the curator asked, with its rolloff given at 10 kHz.",
        evidenceKind: "listening",
        evidence: "Compared on the bench around 1:10.",
      },
    });
    expect(chosen.status).toBe(201);
    const history = await api(`/api/sides/${sideId}/curve-choices`, { cookie: cookie.engineer });
    expect(history.body.choices[0].overrides.rolloff).toEqual({ unit: "db10k", value: 13.7 });
    // The returned side keeps its flat transfer; with the new curve it needs its render again.
    expect(await sideStatus()).toBe("curve_chosen");
    await renderAndWait();
    await submitForReview();
    expect(await sideStatus()).toBe("in_review");
  }, 150_000);

  it("a second curator checks fixity and approves; the audit page shows every step", async () => {
    const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const page = await context.newPage();
    await signIn(page, second.email, second.password);
    await page.goto(`${appUrl}/review/${sideId}`);
    await page.getByTestId("review-title").getByText(shelfMark).waitFor();
    // The recorded curve is named with what was changed for the side, here and in the listening list.
    await page
      .getByTestId("curve-name")
      .getByText(/^RIAA .* v\d+ \+ rolloff 13\.7 dB attenuation at 10 kHz$/)
      .waitFor();
    await page
      .getByTestId("audition-candidates")
      .getByText(/Chosen: RIAA .* v\d+ \+ rolloff 13\.7 dB attenuation at 10 kHz/)
      .waitFor();
    await page.getByTestId("review-history").getByText(returnReason).waitFor();

    // Before the new access copy has passed fixity, the server refuses the approval and the page says why.
    const renderFixity = page.getByTestId("review-render-fixity");
    await renderFixity.waitFor();
    if ((await renderFixity.getAttribute("data-state")) !== "passed") {
      await page.getByTestId("review-approve").click();
      await expect
        .poll(() => page.getByTestId("review-refusal").innerText(), { timeout: 15_000 })
        .toMatch(/fixity check first/);
      expect(await sideStatus()).toBe("in_review");
    }

    // Check fixity now: the worker reads both files back; the page polls until both pass.
    await page.getByTestId("fixity-check").click();
    await expect
      .poll(() => page.getByTestId("review-transfer-fixity").getAttribute("data-state"), {
        timeout: 60_000,
        interval: 500,
      })
      .toBe("passed");
    await expect
      .poll(() => renderFixity.getAttribute("data-state"), { timeout: 60_000, interval: 500 })
      .toBe("passed");
    await page
      .getByTestId("fixity-check-progress")
      .getByText(/both files read back/)
      .waitFor({ timeout: 15_000 });

    await page.getByTestId("review-approve").click();
    await page
      .getByTestId("review-decided")
      .getByText(/^Approved$/)
      .waitFor();
    await expect.poll(() => page.getByTestId("review-history-item").count()).toBe(2);
    expect(await sideStatus()).toBe("approved");
    await screenshot(page, "review");

    // The audit page: the disc's history names each step, newest first, with entry numbers.
    await page.goto(`${appUrl}/audit?disc=${discId}`);
    const log = page.getByTestId("log-entries");
    await log.locator('[data-kind="side.approved"]').waitFor();
    const entry = (kind: string) => log.locator(`[data-kind="${kind}"]`);
    await expect(entry("side.returned").innerText()).resolves.toContain(returnReason);
    await expect(entry("side.returned").innerText()).resolves.toMatch(/Della Prior returned side A/);
    await expect(entry("side.curve_changed").innerText()).resolves.toMatch(
      /changed the curve of side A.*RIAA/s,
    );
    await expect(entry("side.curve_changed").innerText()).resolves.toMatch(
      /Preset values then\s*RIAA[^\n]* v\d+: turnover 318 µs/,
    );
    await expect(entry("side.curve_chosen").count()).resolves.toBe(1);
    await expect(entry("side.rendered").count()).resolves.toBe(2);
    await expect(entry("side.approved").innerText()).resolves.toMatch(
      new RegExp(`${second.name} approved side A`),
    );
    await expect(entry("side.fixity_checked").count()).resolves.toBeGreaterThanOrEqual(2);
    await expect(entry("side.transfer_accepted").count()).resolves.toBe(1);

    // In the order it happened: returned, then the curve changed, rendered again, approved.
    const seqOf = async (kind: string) => Number(await entry(kind).first().getAttribute("data-seq"));
    const returned = await seqOf("side.returned");
    const changed = await seqOf("side.curve_changed");
    const rendered = await seqOf("side.rendered");
    const approved = await seqOf("side.approved");
    expect(returned).toBeLessThan(changed);
    expect(changed).toBeLessThan(rendered);
    expect(rendered).toBeLessThan(approved);

    // The disc's exports, the package among them now that its one side is approved.
    await expect(page.getByTestId("export-json").getAttribute("href")).resolves.toBe(
      `/api/discs/${discId}/export?format=json`,
    );
    await expect(page.getByTestId("export-premis").getAttribute("href")).resolves.toBe(
      `/api/discs/${discId}/export?format=premis`,
    );
    await expect(page.getByTestId("export-zip").getAttribute("href")).resolves.toBe(
      `/api/discs/${discId}/export?format=zip`,
    );

    // The chain verification runs and reports.
    await page.getByTestId("chain-verify").click();
    await page.getByTestId("chain-result").waitFor({ timeout: 60_000 });
    await expect
      .poll(() => page.getByTestId("chain-last").innerText(), { timeout: 15_000 })
      .toContain(second.name);
    await screenshot(page, "audit");

    // The disc page's timeline reads as the audit page does: which side, which file, which curve, which outcome.
    await page.goto(`${appUrl}/catalogue/${discId}`);
    const timeline = page.getByTestId("provenance-timeline");
    const item = (kind: string) => timeline.locator(`[data-testid="timeline-entry"][data-kind="${kind}"]`);
    await item("side.approved").waitFor();
    await expect(item("side.approved").innerText()).resolves.toMatch(
      new RegExp(`${second.name} approved side A: its flat transfer, curve and access copy`),
    );
    await expect(item("side.approved").innerText()).resolves.toMatch(
      /Curve\s*RIAA .* \+ rolloff 13\.7 dB attenuation at 10 kHz/,
    );
    await expect(item("side.returned").innerText()).resolves.toContain(
      `returned side A to the engineer: “${returnReason}”`,
    );
    await expect(item("side.transfer_accepted").innerText()).resolves.toMatch(
      new RegExp(`uploaded the flat transfer ${shelfMark} A flat\\.wav of side A \\(SHA-256 [0-9a-f]{8}…\\)`),
    );
    await expect(item("side.rendered").first().innerText()).resolves.toMatch(
      new RegExp(
        String.raw`rendered the access copy of side A .*from .*flat\.wav through RIAA .* ` +
          String.raw`\+ rolloff 13\.7 dB attenuation at 10 kHz, at [\d.]+ kHz, \d+-bit \(SHA-256 [0-9a-f]{8}…\)`,
      ),
    );
    const fixity = await item("side.fixity_checked").allInnerTexts();
    expect(fixity.length).toBeGreaterThanOrEqual(2);
    for (const text of fixity)
      expect(text).toMatch(
        /A fixity check of the (flat transfer \S+\.wav|access copy) of side A \(SHA-256 [0-9a-f]{8}…\) passed\./,
      );
    expect(fixity.some((t) => /of the flat transfer /.test(t))).toBe(true);
    expect(fixity.some((t) => /of the access copy /.test(t))).toBe(true);
    await timeline.scrollIntoViewIfNeeded();
    await screenshot(page, "disc-timeline");
    await context.close();
  }, 180_000);
});
