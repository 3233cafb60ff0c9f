// The transfer bench end to end, in the archive's order: an archivist catalogues a
// two-sided shellac disc and assigns it to the engineer Wen Okafor (through the API).
// Wen opens side A on the bench and uploads the generated flat transfer first, with no
// curve recorded (the progress bar reaches 100 %); listens through two candidate presets
// (the player starts, switching changes what is playing, and nothing is recorded);
// records the one chosen from the listening panel, whose evidence is filled in with what
// was compared; renders the access copy, plays it A/B against the flat transfer through
// the curve, downloads it and sends the side for review; the curator Della Prior checks
// fixity and approves it in the browser. Screenshots "bench-upload", "bench-audition",
// "bench-choose", "bench-render" and "bench-approved" land in storage/test/screenshots.
import type { Browser } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { api, appUrl, signInCookie } from "../support/app";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";
import { makeWav } from "../support/make-wav";

let browser: Browser;
const archivist = demoAccounts.find((a) => a.role === "archivist")!;
const engineer = demoAccounts.find((a) => a.role === "engineer")!;
const curator = demoAccounts.find((a) => a.role === "curator")!;
const run = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase();
let sideA: string;
let discId: string;
let engineerCookie: string;

beforeAll(async () => {
  browser = await launchBrowser();
  const cookie = await signInCookie(archivist.email, archivist.password);
  const engineers = await api("/api/engineers", { cookie });
  const wen = (engineers.body.engineers as { id: string; name: string }[]).find(
    (e) => e.name === engineer.name,
  )!;
  const acc = await api("/api/accessions", {
    cookie,
    method: "POST",
    body: { identifier: `E2E-BENCH-${run}`, source: "Bench end-to-end test", receivedOn: "2026-11-30" },
  });
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
  discId = disc.body.disc.id;
  engineerCookie = await signInCookie(engineer.email, engineer.password);
  const assigned = await api("/api/assignments", {
    cookie,
    method: "POST",
    body: { engineerId: wen.id, discIds: [disc.body.disc.id] },
  });
  expect(assigned.status).toBeLessThan(300);
});

afterAll(async () => {
  await browser?.close();
});

describe("transfer bench", () => {
  it("takes a side from its flat transfer, through listening and the curve heard, to an approved access copy", async () => {
    const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const page = await context.newPage();
    await (await new SignInPage(page).open()).signIn(engineer.email, engineer.password);
    await page.waitForURL(`${appUrl}/`);

    // The side is in the bench's queue and opens from there.
    await page.goto(`${appUrl}/bench`);
    const queue = page.getByTestId("queue-table");
    await queue.getByText(`MX${run}A`).waitFor();
    await queue
      .getByRole("row")
      .filter({ hasText: `MX${run}A` })
      .getByTestId("queue-bench-link")
      .click();
    await page.waitForURL(`${appUrl}/bench/${sideA}`);
    await page.getByTestId("bench-title").getByText(`E2E-B-${run}`).waitFor();
    await page
      .getByTestId("handling-cautions")
      .getByText(/Shellac is brittle/)
      .waitFor();

    // 1 · The flat transfer first: nothing recorded about the curve yet.
    await page.getByTestId("curve-choice-form").waitFor();
    await page.getByTestId("choice-history-empty").waitFor();
    const wav = makeWav({ seconds: 10 });
    await page
      .getByTestId("upload-input")
      .setInputFiles({ name: `E2E-B-${run} A flat.wav`, mimeType: "audio/wav", buffer: Buffer.from(wav) });
    await page.getByTestId("upload-stylus-size").fill("3.0 mil");
    await page.getByTestId("upload-stylus-shape").fill("truncated elliptical");
    await page.getByTestId("upload-measured-speed").fill("78.05");
    await page.getByTestId("upload-chain").fill("Turntable → flat preamp → converter at 44.1 kHz/24");
    await page.getByTestId("upload-start").click();
    await page.getByTestId("upload-done").waitFor({ timeout: 60_000 });
    await expect(page.getByTestId("upload-progress-percent").innerText()).resolves.toMatch(/^100 %/);
    const row = page.getByTestId("transfer-row").first();
    await row.waitFor();
    await row.getByTestId("transfer-current").waitFor();
    await expect(row.getByTestId("transfer-sha256").innerText()).resolves.toMatch(/[0-9a-f]{64}/);
    await expect(row.innerText()).resolves.toMatch(/44,100 Hz · stereo/);
    await expect
      .poll(async () => (await api(`/api/sides/${sideA}`, { cookie: engineerCookie })).body.side.status)
      .toBe("transferred");
    await screenshot(page, "bench-upload");

    // 2 · Listen: two candidate presets on the flat transfer; listening records nothing.
    const eventsBefore = (await api(`/api/discs/${discId}/events`, { cookie: engineerCookie })).body.events
      .length;
    await page
      .getByTestId("preset-pick")
      .selectOption({ label: "BS 1928:1955 coarse groove (3180/450/50 µs)" });
    await page.getByTestId("preset-pick-add").click();
    await page.getByTestId("preset-pick").selectOption({ label: "RIAA / IEC 60098 (3180/318/75 µs)" });
    await page.getByTestId("preset-pick-add").click();
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
    await expect.poll(() => state.innerText()).toMatch(/Playing · BS 1928/);
    await page.getByTestId("audition-candidate-2").check({ force: true });
    await expect.poll(() => state.innerText()).toMatch(/Playing · RIAA/);
    await page
      .getByTestId("spectrum-plot")
      .locator('[data-testid^="spectrum-line-preset:"]')
      .first()
      .waitFor();
    await screenshot(page, "bench-audition");
    await page.getByTestId("audition-pause").click();
    expect((await api(`/api/discs/${discId}/events`, { cookie: engineerCookie })).body.events.length).toBe(
      eventsBefore,
    );

    // 3 · Record the curve heard, from the listening panel: the form is filled in with what was compared.
    await page.getByTestId("audition-record").click();
    const form = page.getByTestId("curve-choice-form");
    const riaaId = await form
      .getByTestId("choice-preset")
      .locator("option", { hasText: "RIAA / IEC 60098" })
      .first()
      .getAttribute("value");
    await expect.poll(() => form.getByTestId("choice-preset").inputValue()).toBe(riaaId);
    await expect(form.getByTestId("choice-evidence-kind").inputValue()).resolves.toBe("listening");
    const evidence = await form.getByTestId("choice-evidence").inputValue();
    expect(evidence).toMatch(
      /Compared by ear on the flat transfer E2E-B-.*flat\.wav \(SHA-256 [0-9a-f]{16}…\)/,
    );
    expect(evidence).toMatch(/BS 1928/);
    expect(evidence).toMatch(/Chosen: RIAA/);
    await form
      .getByTestId("choice-evidence")
      .fill(`${evidence} Surface noise lower with RIAA; the strings keep their edge.`);
    await form
      .getByTestId("choice-rationale")
      .fill("By ear on the flat transfer: RIAA sits best against the BS 1928 curve for this pressing.");
    await form.getByTestId("record-choice").click();
    await page.getByTestId("choice-history").getByText(/^RIAA/).first().waitFor();
    await expect
      .poll(async () => (await api(`/api/sides/${sideA}`, { cookie: engineerCookie })).body.side.status)
      .toBe("curve_chosen");
    const recorded = (await api(`/api/sides/${sideA}/curve-choices`, { cookie: engineerCookie })).body
      .choices[0];
    expect(recorded.evidenceKind).toBe("listening");
    expect(recorded.evidence).toMatch(/Surface noise lower with RIAA/);
    await screenshot(page, "bench-choose");

    // Render: lateral cut, stereo transfer → the sum is suggested; wait for the worker.
    await expect(page.getByTestId("render-channel-mode").inputValue()).resolves.toBe("sum");
    await page.getByTestId("render-start").click();
    const render = page.getByTestId("render-row").first();
    await render.waitFor();
    await expect
      .poll(() => render.getAttribute("data-status"), { timeout: 120_000, interval: 500 })
      .toBe("done");
    const link = render.getByTestId("render-download");
    await link.waitFor();
    await page.getByTestId("send-for-review").waitFor({ timeout: 15_000 });

    // The access copy, A/B against the flat transfer through the chosen curve.
    await render.getByTestId("render-current").waitFor();
    const ab = page.getByTestId("access-ab");
    await ab.waitFor();
    await ab.getByTestId("access-ab-acknowledge").click();
    await expect.poll(() => ab.getByTestId("access-ab-play").isDisabled(), { timeout: 30_000 }).toBe(false);
    await ab.getByTestId("access-ab-play").click();
    const abState = ab.getByTestId("access-ab-state");
    await expect.poll(() => abState.getAttribute("data-playing")).toBe("yes");
    await expect(abState.innerText()).resolves.toMatch(/Playing · A, the access copy/);
    await ab.getByTestId("access-ab-option-curve").check({ force: true });
    await expect.poll(() => abState.innerText()).toMatch(/Playing · B, the flat transfer through the curve/);
    await ab.getByTestId("access-ab-pause").click();
    await screenshot(page, "bench-render");

    const href = await link.getAttribute("href");
    const res = await page.request.get(`${appUrl}${href}`);
    expect(res.status()).toBe(200);
    expect(res.headers()["content-type"]).toMatch(/audio\/(x-)?wav/);
    const body = await res.body();
    expect(["RIFF", "RF64"]).toContain(body.subarray(0, 4).toString("latin1"));
    expect(body.subarray(8, 12).toString("latin1")).toBe("WAVE");

    // Send for review; the curator checks fixity and approves in the browser.
    await page.getByTestId("send-for-review").click();
    await page.getByTestId("choice-locked").waitFor();
    await context.close();

    const curatorContext = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const cpage = await curatorContext.newPage();
    await (await new SignInPage(cpage).open()).signIn(curator.email, curator.password);
    await cpage.waitForURL(`${appUrl}/`);
    await cpage.goto(`${appUrl}/review/${sideA}`);
    await cpage.getByTestId("curve-name").getByText(/^RIAA/).waitFor();
    await cpage.getByTestId("fixity-check").click();
    await expect
      .poll(() => cpage.getByTestId("review-transfer-fixity").getAttribute("data-state"), {
        timeout: 60_000,
        interval: 500,
      })
      .toBe("passed");
    await expect
      .poll(() => cpage.getByTestId("review-render-fixity").getAttribute("data-state"), {
        timeout: 60_000,
        interval: 500,
      })
      .toBe("passed");
    await cpage.getByTestId("review-approve").click();
    await cpage
      .getByTestId("review-decided")
      .getByText(/^Approved$/)
      .waitFor();
    await screenshot(cpage, "bench-approved");
    const side = (await api(`/api/sides/${sideA}`, { cookie: engineerCookie })).body.side;
    expect(side.status).toBe("approved");
    const renders = (await api(`/api/sides/${sideA}/renders`, { cookie: engineerCookie })).body.renders;
    expect(side.currentRenderId).toBe(renders.find((r: { current: boolean }) => r.current).id);
    await curatorContext.close();
  }, 300_000);
});
