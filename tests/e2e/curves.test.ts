// A transfer engineer opens the curve library, starts a new curve in the workbench,
// moves the turnover in Hz and sees the time constant follow, sees the plot, saves the
// curve as a new preset with a change note, and finds it in the library. Screenshots
// "curves-library" and "curves-workbench" land in storage/test/screenshots.
import path from "node:path";
import type { Browser } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { appUrl } from "../support/app";
import { launchBrowser, screenshot, screenshotDir, SignInPage } from "../support/browser";

let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});

afterAll(async () => {
  await browser?.close();
});

describe("curve library and workbench", () => {
  it("lets an engineer shape a curve, save it as a preset and find it in the library", async () => {
    const engineer = demoAccounts.find((a) => a.role === "engineer")!;
    const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const page = await context.newPage();
    await (await new SignInPage(page).open()).signIn(engineer.email, engineer.password);
    await page.waitForURL(`${appUrl}/`);

    await page.goto(`${appUrl}/curves`);
    const table = page.getByTestId("preset-table");
    await table.waitFor();
    await table.getByText("Loading…").waitFor({ state: "detached" });
    await screenshot(page, "curves-library");

    await page.getByTestId("new-curve").click();
    await page.waitForURL(/\/curves\/workbench/);
    const turnoverHz = page.getByTestId("turnover-hz");
    await turnoverHz.waitFor();
    // A new curve starts from RIAA: 318 µs as entered.
    await expect(page.getByTestId("turnover-us").inputValue()).resolves.toBe("318");

    await turnoverHz.fill("500");
    await expect.poll(() => page.getByTestId("turnover-us").inputValue()).toBe("318.3");

    const plot = page.getByTestId("response-plot");
    await plot.waitFor();
    await plot.getByTestId("response-plot-curve-0").waitFor();
    await plot.getByTestId("breakpoint-turnover").waitFor();
    expect(await page.getByTestId("summary-peak").innerText()).toMatch(/dB/);

    // A shelf above the turnover is refused beside the field, and the page stays up.
    await page.getByTestId("shelf-hz").fill("900");
    await expect(page.getByTestId("error-shelf").innerText()).resolves.toMatch(/shelf/i);
    await page.getByTestId("shelf-us").fill("3180");
    await page.getByTestId("error-shelf").waitFor({ state: "detached" });

    // Treble rolloff typed with a minus sign means the same attenuation, and is shown one way once the field is left.
    await page.getByTestId("rolloff-db10k").fill("\u221210");
    await expect.poll(() => page.getByTestId("rolloff-us").inputValue()).toBe("47.75");
    await page.getByTestId("rolloff-us").focus();
    await expect.poll(() => page.getByTestId("rolloff-db10k").inputValue()).toBe("10");
    await page.getByTestId("rolloff-db10k").fill("-10");
    await expect.poll(() => page.getByTestId("rolloff-us").inputValue()).toBe("47.75");
    await page.getByTestId("error-rolloff").waitFor({ state: "detached" });

    // The digital filter panel: the access-copy FIR and, labelled apart, the listening preview's sections.
    const deviation = page.getByTestId("deviation-plot");
    await deviation.waitFor({ timeout: 30_000 });
    await expect.poll(() => deviation.getAttribute("data-pending"), { timeout: 30_000 }).toBe("false");
    await expect(page.getByTestId("deviation-fir-name").innerText()).resolves.toMatch(
      /^Access-copy filter \(FIR, [\d,]+ taps\)$/,
    );
    await expect(page.getByTestId("deviation-iir-name").innerText()).resolves.toMatch(
      /^Listening preview \(IIR, \d second-order sections\)$/,
    );
    await expect(page.getByTestId("deviation-fir-worst-db").innerText()).resolves.toMatch(/dB at/);
    await expect(page.getByTestId("deviation-iir-worst-deg").innerText()).resolves.toMatch(/° at/);
    // Worked out off the page's thread; how long it took is kept on the panel for this check.
    await expect(deviation.getAttribute("data-computed-in")).resolves.toBe("worker");
    const taps96 = await page.getByTestId("deviation-fir-name").innerText();
    await page.getByTestId("sample-rate").selectOption("192000");
    await expect
      .poll(() => page.getByTestId("deviation-fir-name").innerText(), { timeout: 30_000 })
      .not.toBe(taps96);
    await expect.poll(() => deviation.getAttribute("data-pending"), { timeout: 30_000 }).toBe("false");
    console.log(
      `filter deviations at 192 kHz worked out in ${await deviation.getAttribute("data-compute-ms")} ms (${await deviation.getAttribute("data-computed-in")})`,
    );
    await page.getByTestId("sample-rate").selectOption("44100");
    await expect.poll(() => deviation.getAttribute("data-pending"), { timeout: 30_000 }).toBe("false");
    await deviation.scrollIntoViewIfNeeded();
    await screenshot(page, "curves-workbench-filters");
    await deviation.screenshot({ path: path.join(screenshotDir, "curves-workbench-filter-panel.png") });
    await page
      .getByTestId("corner-rolloff")
      .screenshot({ path: path.join(screenshotDir, "curves-workbench-rolloff.png") });

    const name = `E2E turnover 500 Hz ${Date.now().toString(36)}`;
    await page.getByTestId("save-name").fill(name);
    await page.getByTestId("save-notes").fill("Worked out in the end-to-end test.");
    await page.getByTestId("save-change-note").fill("First version: turnover moved to 500 Hz.");
    await page.getByTestId("save-new-preset").click();
    const result = page.getByTestId("save-result");
    await result.waitFor();
    await expect(result.innerText()).resolves.toMatch(/Saved .* as version 1/);
    await page.waitForURL(/preset=/);
    await page.getByTestId("version-history").getByText("First version: turnover moved to 500 Hz.").waitFor();
    await screenshot(page, "curves-workbench");

    await page.goto(`${appUrl}/curves`);
    await page.getByLabel("Filter Curve presets").fill(name);
    await page.getByTestId("preset-table").getByRole("link", { name }).waitFor();
    await context.close();
  });
});
