// The equipment register end to end in chromium. The engineer Wen Okafor registers a stylus
// on the register page (the rest of the bench's items are registered through the API),
// saves a chain on its page and records a calibration of it (the fit is plotted against
// the expected curve before it is saved); uploads a side's flat transfer on the bench with
// that chain, swapping in the new stylus; has the access copy rendered, and the coding
// history read back from the file holds the chain's analogue-source and converter lines.
// The side is approved (API), and the disc's package downloads as a zip and is a valid
// BagIt bag. Last, a fault is recorded against the
// stylus, and the recall lists the transfer. Screenshots "equipment-register",
// "equipment-chain", "equipment-calibration", "bench-chain-upload", "equipment-item" and
// "equipment-recall" land in storage/test/screenshots. Then the admin, the archivist and the
// curator each open the register, a chain, an item and its recall, and see only what their
// role may do ("equipment-register-<role>", "equipment-item-<role>").
import { execFile } from "node:child_process";
import { promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import type { Browser } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { bufferSource, parseCodingHistory, readWavHeader } from "@/lib/audio";
import { analogGainDb, analogModel, RIAA_SPEC } from "@/lib/curves";
import { api, appUrl, signInCookie } from "../support/app";
import { validateBag } from "../support/bagit";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";
import { makeWav } from "../support/make-wav";
import { assignedDisc, chooseCurve, fixityNow, type LabCookies } from "../support/pipeline";

const exec = promisify(execFile);
let browser: Browser;
const engineer = demoAccounts.find((a) => a.role === "engineer")!;
const run = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase();
const cookie = {} as LabCookies & { admin: string };
const items = {} as Record<"turntable" | "cartridge" | "stylus" | "preamp" | "converter", string>;
let discId: string;
let sideId: string;

async function register(body: object): Promise<string> {
  const r = await api("/api/equipment/items", { cookie: cookie.engineer, method: "POST", body });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return r.body.item.id as string;
}

/** A test disc cut with RIAA, played flat through a chain whose cartridge droops a little in the treble. */
function testDiscCsv(): string {
  const model = analogModel(RIAA_SPEC);
  const hz = [31.5, 63, 125, 250, 500, 1000, 2000, 4000, 8000, 10_000, 12_500, 16_000];
  return [
    "hz,db",
    ...hz.map((f) => `${f},${(-analogGainDb(model, f) - 0.9 * (f / 10_000) ** 2).toFixed(2)}`),
  ].join("\n");
}

beforeAll(async () => {
  browser = await launchBrowser();
  for (const role of ["admin", "archivist", "engineer", "curator"] as const) {
    const a = demoAccounts.find((x) => x.role === role)!;
    cookie[role] = await signInCookie(a.email, a.password);
  }
  items.turntable = await register({
    kind: "turntable",
    make: "Harrowgate",
    model: `TT-9 ${run}`,
    serial: "HG-1182",
  });
  items.cartridge = await register({
    kind: "cartridge",
    make: "Vellum Audio",
    model: `MC-3 ${run}`,
    serial: "C-5521",
  });
  items.stylus = await register({
    kind: "stylus",
    make: "Vellum Audio",
    model: `S-30 ${run}`,
    stylusTip: { value: 3, unit: "mil" },
    stylusShape: "truncated elliptical",
  });
  items.preamp = await register({ kind: "preamplifier", make: "Fenwick", model: "FP-1 flat", serial: "P9" });
  items.converter = await register({
    kind: "converter",
    make: "Larkspur",
    model: `AD-24 ${run}`,
    serial: "LX-40",
  });
  ({
    discId,
    sideIds: [sideId],
  } = await assignedDisc(cookie, `E2E-EQ-${run}`, ["A"]));
  await chooseCurve(cookie, [sideId]);
}, 120_000);

afterAll(async () => {
  await browser?.close();
});

describe("the equipment register", () => {
  it("registers a chain, uploads with it, writes its lines into the coding history, and recalls the transfer", async () => {
    const context = await browser.newContext({
      viewport: { width: 1440, height: 900 },
      acceptDownloads: true,
    });
    const page = await context.newPage();
    await (await new SignInPage(page).open()).signIn(engineer.email, engineer.password);
    await page.waitForURL(`${appUrl}/`);

    // 1 · A stylus registered on the register page, its tip typed in µm.
    await page.getByTestId("lab-nav").getByRole("link", { name: "Equipment", exact: true }).click();
    await page.waitForURL(`${appUrl}/equipment`);
    await page.getByTestId("register-item").click();
    const form = page.getByTestId("item-form");
    await form.getByTestId("item-kind").selectOption("stylus");
    await form.getByTestId("item-make").fill("Vellum Audio");
    await form.getByTestId("item-model").fill(`S-25 ${run}`);
    await form.getByTestId("item-serial").fill(`ST-${run}`);
    await form.getByTestId("item-tip").fill("63.5");
    await form.getByTestId("item-tip-unit").selectOption("um");
    await form.getByTestId("item-shape").fill("conical");
    await form.getByTestId("item-save").click();
    await page.waitForURL(/\/equipment\/items\/[0-9a-f-]{36}$/);
    const swapId = page.url().split("/").pop()!;
    await expect(page.getByTestId("item-tip-text").innerText()).resolves.toBe("2.5 mil (63.5 µm)");

    // 2 · The chain, saved on its page.
    await page.goto(`${appUrl}/equipment/chains/new`);
    const chain = page.getByTestId("chain-form");
    await chain.getByTestId("chain-name").fill(`Bench 2 coarse groove ${run}`);
    await chain.getByTestId("chain-pick-turntable").selectOption(items.turntable);
    await chain.getByTestId("chain-pick-cartridge").selectOption(items.cartridge);
    await chain.getByTestId("chain-pick-stylus").selectOption(items.stylus);
    await chain.getByTestId("chain-pick-preamplifier").selectOption(items.preamp);
    await chain.getByTestId("chain-pick-converter").selectOption(items.converter);
    await chain.getByTestId("chain-save").click();
    await page.waitForURL(/\/equipment\/chains\/[0-9a-f-]{36}$/);
    const chainId = page.url().split("/").pop()!;
    await expect(page.getByTestId("chain-items").locator("li").count()).resolves.toBe(5);
    await screenshot(page, "equipment-chain");

    // 3 · A calibration: the fit is plotted against the expected curve before it is recorded.
    await page.getByTestId("record-calibration").click();
    const cal = page.getByTestId("calibration-form");
    await cal.getByTestId("calibration-date").fill("2026-11-28");
    await cal.getByTestId("calibration-disc").fill("Lab frequency disc FR-78 side B");
    await cal.getByTestId("calibration-points").fill(testDiscCsv());
    await cal.getByTestId("calibration-preview-response").waitFor();
    await cal.getByTestId("calibration-residuals").waitFor();
    await screenshot(page, "equipment-calibration");
    await cal.getByTestId("calibration-save").click();
    await page.getByTestId("calibration-list").getByTestId("calibration").first().waitFor();
    await expect(page.getByTestId("calibration-deviation").first().innerText()).resolves.toMatch(/dB RMS/);

    // 4 · The upload on the bench, with the chain and the new stylus swapped in.
    await page.goto(`${appUrl}/bench/${sideId}`);
    await page.getByTestId("upload-input").setInputFiles({
      name: `E2E-EQ-${run} A flat.wav`,
      mimeType: "audio/wav",
      buffer: Buffer.from(makeWav({ seconds: 4 })),
    });
    await page.getByTestId("upload-measured-speed").fill("78.26");
    await page.getByTestId("upload-chain-id").selectOption(chainId);
    await page
      .getByTestId("upload-swap")
      .locator("option", { hasText: `S-25 ${run}` })
      .waitFor({ state: "attached" });
    await page.getByTestId("upload-swap").selectOption(swapId);
    await page.getByTestId("upload-chain-items").getByText("(swapped in)").waitFor();
    await page.getByTestId("upload-start").click();
    await page.getByTestId("upload-done").waitFor({ timeout: 60_000 });
    const used = page.getByTestId("transfer-row").first().getByTestId("transfer-equipment");
    await used.getByText(`Bench 2 coarse groove ${run}`).waitFor();
    await used.getByText(/swapped in/).waitFor();
    await expect(used.getByTestId("transfer-calibration").innerText()).resolves.toMatch(
      /calibrated 2026-11-28/,
    );
    await screenshot(page, "bench-chain-upload");

    // 5 · The render; the coding history read back from the access copy holds the chain's lines.
    await page.getByTestId("render-start").click();
    const render = page.getByTestId("render-row").first();
    await expect
      .poll(() => render.getAttribute("data-status"), { timeout: 120_000, interval: 500 })
      .toBe("done");
    const href = await render.getByTestId("render-download").getAttribute("href");
    const copy = await page.request.get(`${appUrl}${href}`);
    expect(copy.status()).toBe(200);
    const header = await readWavHeader(bufferSource(new Uint8Array(await copy.body())));
    const lines = parseCodingHistory(header.bext!.codingHistory);
    expect(lines[0].algorithm).toBe("ANALOGUE");
    expect(lines[0].text).toContain(`cartridge Vellum Audio MC-3 ${run} SN C-5521`);
    expect(lines[0].text).toContain(`stylus Vellum Audio S-25 ${run} SN ST-${run} 2.5 mil (63.5 um) conical`);
    expect(lines[0].text).toContain(`turntable Harrowgate TT-9 ${run} SN HG-1182`);
    expect(lines[0].text).toContain("measured speed 78.26 rpm");
    expect(lines[1]).toMatchObject({ algorithm: "PCM", samplingHz: 44_100, wordLength: 24 });
    expect(lines[1].text).toContain(`Larkspur AD-24 ${run} SN LX-40 A/D`);
    await page.getByTestId("send-for-review").click();
    await page.getByTestId("choice-locked").waitFor();

    // 6 · Approved by the curator; the disc's package downloads and opens, its record naming the items.
    await fixityNow(cookie, discId, [sideId]);
    const approved = await api(`/api/sides/${sideId}/review`, {
      cookie: cookie.curator,
      method: "POST",
      body: { decision: "approved" },
    });
    expect(approved.status).toBe(200);
    const zip = await fetch(`${appUrl}/api/discs/${discId}/export?format=zip`, {
      headers: { cookie: cookie.curator },
    });
    expect(zip.status).toBe(200);
    const tmp = await fs.mkdtemp(path.join(os.tmpdir(), "rillbook-eq-"));
    try {
      const file = path.join(tmp, "package.zip");
      await fs.writeFile(file, Buffer.from(await zip.arrayBuffer()));
      await exec("unzip", ["-tq", file]);
      await exec("unzip", ["-q", file, "-d", tmp]);
      // The package is a valid BagIt bag (RFC 8493, tests/support/bagit.ts).
      const bag = path.join(
        tmp,
        (await fs.readdir(tmp)).find((f) => f !== "package.zip")!,
      );
      expect((await validateBag(bag)).problems).toEqual([]);
      const names = (await fs.readdir(tmp, { recursive: true })).map(String);
      const recordFile = names.find((n) => n.endsWith("record.json"))!;
      const premisFile = names.find((n) => n.endsWith("premis.xml"))!;
      expect(await fs.readFile(path.join(tmp, recordFile), "utf8")).toContain(`S-25 ${run}`);
      expect(await fs.readFile(path.join(tmp, premisFile), "utf8")).toMatch(/>hardware</);
    } finally {
      await fs.rm(tmp, { recursive: true, force: true });
    }

    // 7 · A chipped tip found: the item page lists the transfer for re-transfer, and so does the recall.
    await page.goto(`${appUrl}/equipment/items/${swapId}`);
    const finding = page.getByTestId("finding-form");
    await finding.getByTestId("finding-fault").check();
    await finding.getByTestId("finding-description").fill("Tip chipped, seen under the microscope.");
    await finding.getByTestId("finding-save").click();
    await page
      .getByTestId("finding-window")
      .getByText(/1 transfer made with it/)
      .waitFor();
    await page.getByTestId("finding-list").getByText("Tip chipped").waitFor();
    await screenshot(page, "equipment-item");
    await page.getByTestId("item-recall").click();
    await page.waitForURL(/\/transfers/);
    await page
      .getByTestId("recall-row")
      .first()
      .getByRole("link", { name: `E2E-EQ-${run}` })
      .waitFor();
    await page.getByTestId("recall-from").fill("2020-01-01");
    await expect.poll(() => page.getByTestId("recall-row").count()).toBe(1);
    const csv = await page.request.get(
      `${appUrl}${await page.getByTestId("recall-csv").getAttribute("href")}`,
    );
    expect(await csv.text()).toContain(`E2E-EQ-${run},A,`);
    await screenshot(page, "equipment-recall");

    await page.goto(`${appUrl}/equipment`);
    await page.getByTestId("item-table").getByText(`S-25 ${run}`).waitFor();
    await screenshot(page, "equipment-register");
    await context.close();
  }, 300_000);

  it("shows the admin, the archivist and the curator only what each may do, and a 404 page for an address naming nothing", async () => {
    const chain = await api("/api/equipment/chains", {
      cookie: cookie.engineer,
      method: "POST",
      body: { name: `Roles ${run}`, itemIds: [items.turntable, items.cartridge, items.stylus] },
    });
    expect(chain.status, JSON.stringify(chain.body)).toBe(201);
    const chainId = chain.body.chain.id as string;
    for (const role of ["admin", "archivist", "curator"] as const) {
      const keeps = role === "admin";
      const account = demoAccounts.find((a) => a.role === role)!;
      const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
      const page = await context.newPage();
      await (await new SignInPage(page).open()).signIn(account.email, account.password);
      await page.waitForURL(`${appUrl}/`);

      // The register, reached from the lab's navigation: only a keeper of the register may add to it.
      await page.getByTestId("lab-nav").getByRole("link", { name: "Equipment", exact: true }).click();
      await page.waitForURL(`${appUrl}/equipment`);
      await page.getByTestId("item-table").getByText(`S-30 ${run}`).waitFor();
      await expect(page.getByTestId("register-item").count(), role).resolves.toBe(keeps ? 1 : 0);
      await expect(page.getByTestId("new-chain").count(), role).resolves.toBe(keeps ? 1 : 0);
      await screenshot(page, `equipment-register-${role}`);

      // A chain: an admin may change it but, like every role but the engineer, not calibrate it.
      await page.goto(`${appUrl}/equipment/chains/${chainId}`);
      await expect(page.getByTestId("chain-items").locator("li").count()).resolves.toBe(3);
      await expect(page.getByTestId("edit-chain").count(), role).resolves.toBe(keeps ? 1 : 0);
      await expect(page.getByTestId("record-calibration").count(), role).resolves.toBe(0);

      // An item: everyone may open its recall; only a keeper records a finding or corrects it.
      await page.goto(`${appUrl}/equipment/items/${items.stylus}`);
      await page.getByTestId("item-tip-text").waitFor();
      await expect(page.getByTestId("finding-form").count(), role).resolves.toBe(keeps ? 1 : 0);
      await expect(page.getByTestId("edit-item").count(), role).resolves.toBe(keeps ? 1 : 0);
      await screenshot(page, `equipment-item-${role}`);
      await page.getByTestId("item-recall").click();
      await page.waitForURL(/\/transfers/);
      await page.getByTestId("recall-count").waitFor();

      // An address that names no item or chain is the 404 page, not an error.
      for (const address of [
        "/equipment/items/not-an-item",
        "/equipment/items/00000000-0000-4000-8000-000000000000",
        "/equipment/chains/00000000-0000-4000-8000-000000000000",
      ]) {
        const answer = await page.goto(`${appUrl}${address}`);
        expect(answer?.status(), `${role} ${address}`).toBe(404);
      }
      await context.close();
    }
  }, 180_000);
});
