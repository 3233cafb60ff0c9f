// The transfer bench end to end: an archivist catalogues a two-sided shellac disc and
// assigns it to the engineer Wen Okafor (through the API). Wen opens side A on the
// bench, picks a preset with a rationale and records it, uploads a generated flat
// transfer through the page (the progress bar reaches 100 %), listens through two
// curves (the player starts, switching changes what is playing), renders the access
// copy, waits for the worker to finish it and downloads it. Screenshots
// "bench-choose", "bench-upload", "bench-audition" and "bench-render" land in
// storage/test/screenshots.
import type { Browser } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/db/seed-data";
import { api, appUrl, signInCookie } from "../support/app";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";
import { makeWav } from "../support/make-wav";

let browser: Browser;
const archivist = demoAccounts.find((a) => a.role === "archivist")!;
const engineer = demoAccounts.find((a) => a.role === "engineer")!;
const run = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase();
let sideA: string;

beforeAll(async () => {
  browser = await launchBrowser();
  const cookie = await signInCookie(archivist.email, archivist.password);
  const engineers = await api("/api/engineers", { cookie });
  const wen = (engineers.body.engineers as { id: string; name: string }[]).find((e) => e.name === engineer.name)!;
  const acc = await api("/api/accessions", { cookie, method: "POST", body: { identifier: `E2E-BENCH-${run}`, source: "Bench end-to-end test", receivedOn: "2026-11-30" } });
  expect(acc.status).toBe(201);
  const disc = await api("/api/discs", {
    cookie,
    method: "POST",
    body: {
      accessionId: acc.body.accession.id,
      shelfMark: `E2E-B-${run}`,
      labelName: "Quillstone",
      catalogueNumber: `Q ${run}`,
      format: "shellac_78",
      nominalSpeedRpm: 78,
      groove: "coarse",
      cut: "lateral",
      sides: [
        { designation: "A", matrixNumber: `MX${run}A`, take: "2", title: "Harbour Lights Waltz" },
        { designation: "B", matrixNumber: `MX${run}B`, take: "1", title: "Lantern Reel" },
      ],
    },
  });
  expect(disc.status).toBe(201);
  sideA = disc.body.disc.sides.find((s: { designation: string }) => s.designation === "A").id;
  const assigned = await api("/api/assignments", { cookie, method: "POST", body: { engineerId: wen.id, discIds: [disc.body.disc.id] } });
  expect(assigned.status).toBeLessThan(300);
});

afterAll(async () => {
  await browser?.close();
});

describe("transfer bench", () => {
  it("takes a side from curve choice to a downloaded access copy", async () => {
    const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const page = await context.newPage();
    await (await new SignInPage(page).open()).signIn(engineer.email, engineer.password);
    await page.waitForURL(`${appUrl}/`);

    // The side is in the bench's queue and opens from there.
    await page.goto(`${appUrl}/bench`);
    const queue = page.getByTestId("queue-table");
    await queue.getByText(`MX${run}A`).waitFor();
    await queue.getByRole("row").filter({ hasText: `MX${run}A` }).getByTestId("queue-bench-link").click();
    await page.waitForURL(`${appUrl}/bench/${sideA}`);
    await page.getByTestId("bench-title").getByText(`E2E-B-${run}`).waitFor();
    await page.getByTestId("handling-cautions").getByText(/Shellac is brittle/).waitFor();

    // Choose: a preset, a rationale, what it rests on; recorded for this side.
    const form = page.getByTestId("curve-choice-form");
    await form.getByTestId("choice-preset").locator("option", { hasText: "BS 1928" }).waitFor({ state: "attached" });
    const bs1928 = await form.getByTestId("choice-preset").locator("option", { hasText: "BS 1928" }).first().getAttribute("value");
    await form.getByTestId("choice-preset").selectOption(bs1928!);
    await expect(form.getByTestId("choice-cut-rpm").inputValue()).resolves.toBe("78");
    await form.getByTestId("choice-rationale").fill("British coarse-groove side of the period; the BS 1928 curve is the published guidance.");
    await form.getByTestId("choice-evidence-kind").selectOption("published_guidance");
    await form.getByTestId("record-choice").click();
    await page.getByTestId("choice-history").getByText(/^BS 1928:1955 .* v1$/).waitFor();
    await page.getByTestId("response-plot").waitFor();
    await screenshot(page, "bench-choose");

    // Upload: the generated flat transfer through the drop area's file input.
    const wav = makeWav({ seconds: 10 });
    await page.getByTestId("upload-input").setInputFiles({ name: `E2E-B-${run} A flat.wav`, mimeType: "audio/wav", buffer: Buffer.from(wav) });
    await page.getByTestId("upload-stylus-size").fill("3.0 mil");
    await page.getByTestId("upload-stylus-shape").fill("truncated elliptical");
    await page.getByTestId("upload-measured-speed").fill("78.05");
    await page.getByTestId("upload-chain").fill("Turntable → flat preamp → converter at 44.1 kHz/24");
    await page.getByTestId("upload-start").click();
    await page.getByTestId("upload-done").waitFor({ timeout: 60_000 });
    await expect(page.getByTestId("upload-progress-percent").innerText()).resolves.toMatch(/^100 %/);
    const row = page.getByTestId("transfer-row").first();
    await row.waitFor();
    await expect(row.getByTestId("transfer-sha256").innerText()).resolves.toMatch(/[0-9a-f]{64}/);
    await expect(row.innerText()).resolves.toMatch(/44,100 Hz · stereo/);
    await screenshot(page, "bench-upload");

    // Audition: a second curve to compare, the caution, play, switch between curves.
    await page.getByTestId("candidate-add-select").selectOption({ label: "RIAA / IEC 60098 (3180/318/75 µs)" });
    await page.getByTestId("candidate-add").click();
    await page.getByTestId("audition-overview").waitFor({ timeout: 30_000 });
    await page.getByTestId("spectrum-plot").waitFor({ timeout: 30_000 });
    await expect(page.getByTestId("audition-play").isDisabled()).resolves.toBe(true);
    await page.getByTestId("audition-acknowledge").click();
    await expect(page.getByTestId("audition-volume").inputValue()).resolves.toBe("-24");
    await page.getByTestId("audition-play").click();
    const state = page.getByTestId("audition-state");
    await expect.poll(() => state.getAttribute("data-context-state"), { timeout: 10_000 }).toBe("running");
    await expect.poll(() => state.innerText()).toMatch(/^Playing/);
    await page.getByTestId("audition-candidate-1").check({ force: true });
    await expect.poll(() => state.getAttribute("data-active")).toBe("current");
    await expect(state.innerText()).resolves.toMatch(/Playing · Recorded: BS 1928/);
    await page.getByTestId("audition-candidate-2").check({ force: true });
    await expect.poll(() => state.innerText()).toMatch(/Playing · RIAA/);
    await page.getByTestId("spectrum-plot").locator('[data-testid^="spectrum-line-preset:"]').waitFor();
    await screenshot(page, "bench-audition");
    await page.getByTestId("audition-pause").click();

    // Render: lateral cut, stereo transfer → the sum is suggested; wait for the worker.
    await expect(page.getByTestId("render-channel-mode").inputValue()).resolves.toBe("sum");
    await page.getByTestId("render-start").click();
    const render = page.getByTestId("render-row").first();
    await render.waitFor();
    await expect.poll(() => render.getAttribute("data-status"), { timeout: 120_000, interval: 500 }).toBe("done");
    const link = render.getByTestId("render-download");
    await link.waitFor();
    await page.getByTestId("send-for-review").waitFor({ timeout: 15_000 });
    await screenshot(page, "bench-render");

    const href = await link.getAttribute("href");
    const res = await page.request.get(`${appUrl}${href}`);
    expect(res.status()).toBe(200);
    expect(res.headers()["content-type"]).toMatch(/audio\/(x-)?wav/);
    const body = await res.body();
    expect(["RIFF", "RF64"]).toContain(body.subarray(0, 4).toString("latin1"));
    expect(body.subarray(8, 12).toString("latin1")).toBe("WAVE");
    await context.close();
  }, 240_000);
});
