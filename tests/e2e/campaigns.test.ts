// A re-render campaign end to end. Arranged through the API: an engineer saves a preset,
// three sides of a new disc rest on its version 1 with an override of their own, are
// transferred and rendered, and two go to review; the engineer then saves version 2,
// marked as correcting version 1 with a note. In chromium the curator Della Prior opens
// the preset's uses from the curve library, sees the counts of version 1, selects every
// side and starts a campaign, and watches its page until every side is done (the page
// polls). Screenshots "preset-uses", "campaign-running", "campaign-finished",
// "campaigns-list" and "workbench-correction" land in storage/test/screenshots.
import type { Browser } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { api, appUrl } from "../support/app";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";
import { testDb } from "../support/db";
import {
  assignedDisc,
  flatTransfer,
  labCookies,
  type LabCookies,
  renderAndWait,
  uploadTransfer,
} from "../support/pipeline";

let browser: Browser;
let c: LabCookies;
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
    const presetId = preset.body.preset.id as string;
    const { sideIds } = await assignedDisc(c, `E2E-C-${run}`, ["A", "B", "C"]);
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
    const campaignId = page.url().split("/").pop()!;
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
});
