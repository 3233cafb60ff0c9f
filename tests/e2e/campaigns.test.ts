// A re-render campaign end to end. Arranged through the API: an engineer saves a preset,
// three sides of a new disc rest on its version 1 with an override of their own, are
// transferred and rendered, and two go to review; the engineer then saves version 2,
// marked as correcting version 1 with a note. In chromium the curator Della Prior opens
// the preset's uses from the curve library, sees the counts of version 1, selects every
// side and starts a campaign, and watches its page until every side is done (the page
// polls). Screenshots "preset-uses", "campaign-running", "campaign-finished",
// "campaigns-list" and "workbench-correction" land in storage/test/screenshots. Then each role
// in turn: a second curator approves a side the campaign sent back, the archivist and the
// admin only read, and the engineer corrects the preset again in the workbench, starts a
// campaign from the uses and cancels it.
import type { Browser } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { hashPassword } from "@/lib/auth/password";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { api, appUrl } from "../support/app";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";
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

let browser: Browser;
let c: LabCookies;
/** What the first test arranges and the second goes on from. */
let presetId: string;
let discId: string;
let sideIds: string[];
let campaignId: string;
const run = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase();
const curator = demoAccounts.find((a) => a.role === "curator")!;
const spec = (turnoverHz: number) => ({
  turnover: { unit: "hz", value: turnoverHz },
  shelf: { unit: "hz", value: 50 },
  rolloff: { unit: "db10k", value: 12 },
  reference: { hz: 1000, db: 0 },
  speedRatio: 1,
});

beforeAll(async () => {
  browser = await launchBrowser();
  c = await labCookies();
});

afterAll(async () => {
  await browser?.close();
  await testDb.destroy();
});

describe("re-render campaign", () => {
  it("lets a curator start a campaign from a corrected preset's uses and watch it finish", async () => {
    const preset = await api("/api/curves/presets", {
      cookie: c.engineer,
      method: "POST",
      body: {
        name: `Brightwell lacquer ${run}`,
        spec: spec(500),
        changeNote: "From the studio's 1948 leaflet",
      },
    });
    expect(preset.status).toBe(201);
    presetId = preset.body.preset.id as string;
    ({ discId, sideIds } = await assignedDisc(c, `E2E-C-${run}`, ["A", "B", "C"]));
    const chosen = await api("/api/curve-choices", {
      cookie: c.engineer,
      method: "POST",
      body: {
        sideIds,
        presetId,
        presetVersion: 1,
        overrides: { rolloff: { unit: "db10k", value: 14 } },
        cutSpeedRpm: 78,
        transferSpeedRpm: 78,
        rationale: "The studio's leaflet.",
        evidenceKind: "disc_documentation",
      },
    });
    expect(chosen.status).toBe(201);
    for (const [i, sideId] of sideIds.entries()) {
      expect((await uploadTransfer(c, sideId, flatTransfer(1, 40 + i), `c-${i}.wav`)).done.status).toBe(201);
      await renderAndWait(c, sideId);
    }
    for (const sideId of sideIds.slice(0, 2))
      expect(
        (
          await api(`/api/sides/${sideId}/transition`, {
            cookie: c.engineer,
            method: "POST",
            body: { to: "in_review" },
          })
        ).status,
      ).toBe(200);
    const v2 = await api(`/api/curves/presets/${presetId}`, {
      cookie: c.engineer,
      method: "PATCH",
      body: {
        spec: spec(350),
        changeNote: "Turnover re-measured",
        corrects: [1],
        correctionNote: "The leaflet's 500 Hz was a misprint: the studio's own test disc gives 350 Hz.",
      },
    });
    expect(v2.status).toBe(200);

    const context = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
    const page = await context.newPage();
    await (await new SignInPage(page).open()).signIn(curator.email, curator.password);
    await page.waitForURL(`${appUrl}/`);

    // From the library: the preset's uses, counts per version.
    await page.goto(`${appUrl}/curves?presetsQ=${encodeURIComponent(run)}`);
    await page.getByTestId("preset-uses").first().click();
    await page.waitForURL(new RegExp(`/curves/presets/${presetId}/uses`));
    await page.getByTestId("preset-uses").waitFor();
    await expect.poll(() => page.getByTestId("uses-version-1-total").innerText()).toMatch(/^3/);
    await expect(page.getByTestId("correction-note").innerText()).resolves.toMatch(/misprint/);
    await page.getByTestId("uses-select-all").check();
    await expect.poll(() => page.getByTestId("uses-selected").innerText()).toMatch(/^3 selected/);
    await screenshot(page, "preset-uses");

    await page.getByTestId("start-campaign").click();
    await page.waitForURL(/\/campaigns\/[0-9a-f-]{36}$/);
    const view = page.getByTestId("campaign-view");
    await view.waitFor();
    await screenshot(page, "campaign-running");
    // The page polls: it reaches "finished" on its own, every side done.
    await expect
      .poll(() => view.getAttribute("data-state"), { timeout: 120_000, interval: 1000 })
      .toBe("finished");
    await expect(page.getByTestId("count-done").innerText()).resolves.toBe("3");
    await expect(page.getByTestId("count-failed").innerText()).resolves.toBe("0");
    await expect(page.getByTestId("campaign-side").count()).resolves.toBe(3);
    await screenshot(page, "campaign-finished");
    campaignId = page.url().split("/").pop()!;
    for (const sideId of sideIds) {
      const s = await testDb
        .selectFrom("sides")
        .select("status")
        .where("id", "=", sideId)
        .executeTakeFirstOrThrow();
      expect(s.status).toBe("in_review");
    }

    await page.goto(`${appUrl}/campaigns`);
    await page.getByTestId("campaign-list").waitFor();
    await expect(page.locator(`a[href="/campaigns/${campaignId}"]`).count()).resolves.toBe(1);
    await screenshot(page, "campaigns-list");

    await page.goto(`${appUrl}/curves/workbench?preset=${presetId}`);
    await page.getByTestId("version-correction").waitFor();
    await page.getByTestId("version-correction").scrollIntoViewIfNeeded();
    await screenshot(page, "workbench-correction");
    await context.close();
  }, 300_000);

  it("shows each role what it may do: a second curator approves, the engineer corrects again and cancels, the archivist and the admin read", async () => {
    expect(campaignId).toBeTruthy();
    // A second curator: the one who started the campaign chose the new curves and may not approve them.
    const second = { email: `curator2-${run.toLowerCase()}@test.example`, password: "second curator pass" };
    await testDb
      .insertInto("users")
      .values({
        email: second.email,
        name: "Oona Second",
        role: "curator",
        password_hash: await hashPassword(second.password),
      })
      .execute();
    await fixityNow(c, discId, sideIds);
    const signedIn = async (email: string, password: string) => {
      const context = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
      const page = await context.newPage();
      await (await new SignInPage(page).open()).signIn(email, password);
      await page.waitForURL(`${appUrl}/`);
      return { context, page };
    };

    // The second curator follows a side from the campaign's page into its review and approves it.
    {
      const { context, page } = await signedIn(second.email, second.password);
      await page.goto(`${appUrl}/campaigns/${campaignId}`);
      await page.getByTestId("campaign-view").waitFor();
      const first = page.getByTestId("campaign-side").first().getByRole("link");
      await expect(first.getAttribute("href")).resolves.toMatch(/^\/review\//);
      await first.click();
      await page.waitForURL(/\/review\/[0-9a-f-]{36}$/);
      const sideId = page.url().split("/").pop()!;
      await page.getByTestId("review-approve").click();
      await expect
        .poll(
          async () =>
            (
              await testDb
                .selectFrom("sides")
                .select("status")
                .where("id", "=", sideId)
                .executeTakeFirstOrThrow()
            ).status,
        )
        .toBe("approved");
      await screenshot(page, "campaign-second-curator-approved");
      await context.close();
    }

    // The archivist and the admin read the campaign and the uses; nothing to start, cancel or retry,
    // and a side opens on its disc's page (the review is the curators').
    for (const role of ["archivist", "admin"] as const) {
      const who = demoAccounts.find((a) => a.role === role)!;
      const { context, page } = await signedIn(who.email, who.password);
      await page.goto(`${appUrl}/campaigns/${campaignId}`);
      await page.getByTestId("campaign-view").waitFor();
      await expect(page.getByTestId("cancel-campaign").count()).resolves.toBe(0);
      await expect(page.getByTestId("retry-all").count()).resolves.toBe(0);
      const link = page.getByTestId("campaign-side").first().getByRole("link");
      await expect(link.getAttribute("href")).resolves.toMatch(/^\/catalogue\//);
      await link.click();
      await page.waitForURL(/\/catalogue\/[0-9a-f-]{36}$/);
      await screenshot(page, `campaign-side-disc-${role}`);
      await page.goto(`${appUrl}/curves/presets/${presetId}/uses?version=1`);
      await page.getByTestId("preset-uses").waitFor();
      await expect(page.getByTestId("start-campaign").count()).resolves.toBe(0);
      await screenshot(page, `preset-uses-${role}`);
      await context.close();
    }

    // The engineer marks a new version as correcting version 2 in the workbench, starts a campaign
    // over the sides from the uses page and cancels it from the campaign's page.
    {
      const engineer = demoAccounts.find((a) => a.role === "engineer")!;
      const { context, page } = await signedIn(engineer.email, engineer.password);
      await page.goto(`${appUrl}/curves/workbench?preset=${presetId}`);
      await page.getByTestId("correction-fields").waitFor();
      await page.getByTestId("save-change-note").fill("Shelf re-measured");
      await page.getByTestId("corrects-2").check();
      await page
        .getByTestId("save-correction-note")
        .fill("Version 2 kept the leaflet's shelf; the test disc says otherwise.");
      await screenshot(page, "workbench-correction-engineer");
      await page.getByTestId("save-new-version").click();
      await expect.poll(() => page.getByTestId("save-result").innerText()).toMatch(/version 3/);
      await page.getByTestId("preset-uses-link").click();
      await page.waitForURL(new RegExp(`/curves/presets/${presetId}/uses`));
      await expect.poll(() => page.getByTestId("uses-version-2-total").innerText()).toMatch(/^3/);
      await page.getByTestId("uses-select-all").check();
      await expect.poll(() => page.getByTestId("uses-selected").innerText()).toMatch(/^3 selected/);
      await page.getByTestId("start-campaign").click();
      await page.waitForURL(/\/campaigns\/[0-9a-f-]{36}$/);
      const view = page.getByTestId("campaign-view");
      await view.waitFor();
      const cancel = page.getByTestId("cancel-campaign");
      if (await cancel.count()) await cancel.click();
      await expect
        .poll(() => view.getAttribute("data-state"), { timeout: 120_000, interval: 1000 })
        .toBe("finished");
      const counts = await Promise.all(
        ["count-done", "count-cancelled", "count-failed"].map(async (id) =>
          Number(await page.getByTestId(id).innerText()),
        ),
      );
      expect(counts[0] + counts[1]).toBe(3);
      expect(counts[2]).toBe(0);
      await screenshot(page, "campaign-cancelled-engineer");
      await context.close();
    }
  }, 300_000);
});
