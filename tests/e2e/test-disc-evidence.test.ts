// A curve chosen on a test-disc measurement, in the browser: the engineer pastes the
// measured points into the bench's curve form, sees the fit tried and plotted, and records
// the choice; the curator opens the side's review page and finds the measurement plotted
// with the choice, with the figures the server worked out. Screenshots
// "bench-test-disc" and "review-test-disc" land in storage/test/screenshots.
import type { Browser } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { api, appUrl } from "../support/app";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";
import { assignedDisc, labCookies, type LabCookies } from "../support/pipeline";
import { runPython } from "../support/python";

let browser: Browser;
let c: LabCookies;
let sideId: string;
const engineer = demoAccounts.find((a) => a.role === "engineer")!;
const curator = demoAccounts.find((a) => a.role === "curator")!;
const run = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase();
const hz = [40, 70, 100, 200, 400, 700, 1000, 2000, 4000, 7000, 10_000, 13_000];
let points: string;

beforeAll(async () => {
  browser = await launchBrowser();
  c = await labCookies();
  ({
    sideIds: [sideId],
  } = await assignedDisc(c, `E2E-TD-${run}`, ["A"]));
  // The house test disc as measured: RIAA playback levels by scipy (IEC 60098 time constants), recording sign.
  const { db } = await runPython<{ db: number[] }>("riaa_table.py", { hz });
  points = ["hz,db", ...hz.map((f, i) => `${f},${(-db[i]).toFixed(2)}`)].join("\n");
});

afterAll(async () => {
  await browser?.close();
});

describe("test-disc evidence in the browser", () => {
  it("records a curve on measured points, and shows the measurement on the review page", async () => {
    const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const page = await context.newPage();
    await (await new SignInPage(page).open()).signIn(engineer.email, engineer.password);
    await page.waitForURL(`${appUrl}/`);
    await page.goto(`${appUrl}/bench/${sideId}`);
    const form = page.getByTestId("curve-choice-form");
    await form.waitFor();
    const riaa = await form
      .getByTestId("choice-preset")
      .locator("option", { hasText: "RIAA / IEC 60098" })
      .first()
      .getAttribute("value");
    await form.getByTestId("choice-preset").selectOption(riaa);
    await form.getByTestId("choice-evidence-kind").selectOption("test_disc");
    const field = form.getByTestId("measurement-field");
    await field.waitFor();
    await field.getByTestId("measurement-points").fill(points);
    await field.getByTestId("measurement-kind-recording").check();
    // The fit is tried in the browser as the points are typed: the standard's points fit the standard.
    const rms = field.getByTestId("measurement-rms");
    await rms.waitFor();
    expect(Number((await rms.innerText()).replace(/ dB$/, ""))).toBeLessThan(0.05);
    await form
      .getByTestId("choice-rationale")
      .fill("The house frequency test disc, measured on chain 2, sits on the RIAA curve.");
    await form.getByTestId("record-choice").click();
    await form.getByTestId("choice-saved").waitFor();
    await field.scrollIntoViewIfNeeded().catch(() => undefined);
    await screenshot(page, "bench-test-disc");
    await context.close();

    const recorded = (await api(`/api/sides/${sideId}/curve-choices`, { cookie: c.engineer })).body
      .choices[0];
    expect(recorded.evidenceKind).toBe("test_disc");
    expect(recorded.measurement.points).toHaveLength(hz.length);

    const curatorContext = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const cpage = await curatorContext.newPage();
    await (await new SignInPage(cpage).open()).signIn(curator.email, curator.password);
    await cpage.waitForURL(`${appUrl}/`);
    await cpage.goto(`${appUrl}/review/${sideId}`);
    const evidence = cpage.getByTestId("measurement-evidence");
    await evidence.waitFor();
    await expect(evidence.getByTestId("measurement-point-count").innerText()).resolves.toBe(
      String(hz.length),
    );
    await evidence.getByTestId("measurement-plot").waitFor();
    await evidence.getByTestId("fit-residual-plot").waitFor();
    await evidence.scrollIntoViewIfNeeded();
    await screenshot(cpage, "review-test-disc");
    await curatorContext.close();
  });
});
