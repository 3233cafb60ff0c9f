// The file store away while an engineer uploads, in chromium: s3rver is killed by its PID
// before the upload starts, the bench says in plain words that the lab's file store cannot
// be reached and that it keeps trying, and once s3rver is started again (same port, same
// data folder) the upload carries on by itself and the transfer is accepted with the
// file's own SHA-256. (Resuming from parts already stored is drilled against the same
// upload code in tests/integration/faults-bucket.test.ts.)
import { createHash } from "node:crypto";
import { promises as fs } from "node:fs";
import path from "node:path";
import type { Browser } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { appUrl } from "../support/app";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";
import { testDb } from "../support/db";
import { makeWav } from "../support/make-wav";
import { assignedDisc, labCookies } from "../support/pipeline";
import { killS3rver, startS3rverAgain, testProfile } from "../support/processes";

let browser: Browser;
let down = false;
const engineer = demoAccounts.find((a) => a.role === "engineer")!;

beforeAll(async () => {
  browser = await launchBrowser();
});

afterAll(async () => {
  if (down) await startS3rverAgain();
  await browser?.close();
  await testDb.destroy();
});

describe("the file store unreachable while the engineer uploads", () => {
  it("shows the outage in plain words, keeps trying, and finishes by itself once the store is back", async () => {
    const shelfMark = `E2E-S3-${Date.now().toString(36)}`.toUpperCase();
    const { sideIds } = await assignedDisc(await labCookies(), shelfMark, ["A"]);
    const sideId = sideIds[0];
    // Two parts (8 MiB and the rest).
    const wav = makeWav({ seconds: 40, seed: 31 });
    const sha256 = createHash("sha256").update(wav).digest("hex");

    const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const page = await context.newPage();
    await (await new SignInPage(page).open()).signIn(engineer.email, engineer.password);
    await page.waitForURL(`${appUrl}/`);
    await page.goto(`${appUrl}/bench/${sideId}`);
    await page.getByTestId("upload-panel").waitFor();
    // From a file on disk: chromium reads it itself, rather than taking 10 MB through the protocol.
    const file = path.join(testProfile.dir, `${shelfMark} A flat.wav`);
    await fs.writeFile(file, wav);
    await page.getByTestId("upload-input").setInputFiles(file, { timeout: 60_000 });
    await page.getByTestId("upload-stylus-size").fill("3.0 mil");
    await page.getByTestId("upload-stylus-shape").fill("truncated elliptical");
    await page.getByTestId("upload-chain").fill("Turntable → flat preamp → converter at 44.1 kHz/24");

    await killS3rver();
    down = true;
    await page.getByTestId("upload-start").click();
    const outage = page.getByTestId("upload-outage");
    await outage.waitFor({ timeout: 30_000 });
    await expect(outage.innerText()).resolves.toMatch(/The lab's file store cannot be reached; retrying…/);
    await expect(outage.innerText()).resolves.toMatch(/Nothing is lost/);
    // Still working on it, not failed: the cancel button is there, no error notice.
    await page.getByTestId("upload-cancel").waitFor();
    expect(await page.getByTestId("upload-error").count()).toBe(0);
    // It keeps trying while the store is away.
    await expect
      .poll(async () => Number((/tried (\d+) time/.exec(await outage.innerText()) ?? [])[1] ?? 0), {
        timeout: 20_000,
      })
      .toBeGreaterThanOrEqual(2);
    await screenshot(page, "bench-upload-store-outage");

    await startS3rverAgain();
    down = false;
    const done = page.getByTestId("upload-done");
    await done.waitFor({ timeout: 90_000 });
    await expect(done.innerText()).resolves.toContain(sha256);
    // (The page reads the file as it sends it: it may go only now.)
    await fs.rm(file);
    expect(await outage.count()).toBe(0);

    // One upload, accepted once, with the file's own checksum.
    const uploads = await testDb
      .selectFrom("uploads")
      .select("state")
      .where("side_id", "=", sideId)
      .execute();
    expect(uploads).toEqual([{ state: "completed" }]);
    const transfers = await testDb
      .selectFrom("transfers")
      .select(["sha256", "bytes"])
      .where("side_id", "=", sideId)
      .execute();
    expect(transfers).toEqual([{ sha256, bytes: expect.anything() }]);
    expect(Number(transfers[0].bytes)).toBe(wav.length);
    await context.close();
  }, 180_000);
});
