// Label images and BagIt packages in chromium. Arranged through the API: a one-sided disc
// is catalogued, transferred, rendered and sent for review. In the browser the archivist adds
// the side's label on the disc page (straight to the bucket); the engineer sees it on the
// bench and the curator on the review page; after approval the admin sets the lab's contact
// and the curator writes the bag into the delivery bucket from the audit page, then the bag
// downloaded from the page's link is validated (RFC 8493). A second image, of another
// disc's label, is withdrawn with a reason. Screenshots "disc-label-images", "label-image-withdraw",
// "bench-label", "review-label", "audit-contact" and "audit-bag" land in storage/test/screenshots.
import { execFile } from "node:child_process";
import { promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import type { Browser, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { api, appUrl } from "../support/app";
import { validateBag } from "../support/bagit";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";
import { testDb } from "../support/db";
import { labelPicture } from "../support/label-images";
import {
  assignedDisc,
  chooseCurve,
  fixityNow,
  flatTransfer,
  type LabCookies,
  labCookies,
  renderAndWait,
  uploadTransfer,
} from "../support/pipeline";

const run = promisify(execFile);
const account = (role: string) => demoAccounts.find((a) => a.role === role)!;
const shelfMark = `E2E-L-${Date.now().toString(36).toUpperCase()}`;
let browser: Browser;
let c: LabCookies;
let discId: string;
let sideId: string;
let tmp: string;

async function signedIn(role: string): Promise<Page> {
  const page = await browser.newPage({ viewport: { width: 1440, height: 1000 } });
  await (await new SignInPage(page).open()).signIn(account(role).email, account(role).password);
  await page.waitForURL(`${appUrl}/`);
  return page;
}

beforeAll(async () => {
  browser = await launchBrowser();
  c = await labCookies();
  tmp = await fs.mkdtemp(path.join(os.tmpdir(), "rillbook-e2e-bag-"));
  const made = await assignedDisc(c, shelfMark, ["A"]);
  discId = made.discId;
  sideId = made.sideIds[0];
  await chooseCurve(c, [sideId]);
  expect((await uploadTransfer(c, sideId, flatTransfer(2, 5), `${shelfMark}.wav`)).done.status).toBe(201);
  await renderAndWait(c, sideId);
  const sent = await api(`/api/sides/${sideId}/transition`, {
    cookie: c.engineer,
    method: "POST",
    body: { to: "in_review" },
  });
  expect(sent.status).toBe(200);
}, 240_000);

afterAll(async () => {
  await browser?.close();
  await fs.rm(tmp, { recursive: true, force: true });
  await testDb.destroy();
});

describe("label images and bags in the browser", () => {
  it("lets the archivist add side A's label on the disc page", async () => {
    const page = await signedIn("archivist");
    await page.goto(`${appUrl}/catalogue/${discId}`);
    const panel = page.getByTestId("label-images");
    await panel.getByTestId("label-images-none").waitFor();
    const file = path.join(tmp, "side-A-label.png");
    await fs.writeFile(file, await labelPicture("png", 800));
    await panel.getByTestId("label-image-file").setInputFiles(file);
    await panel.getByTestId("label-image-add").click();
    await expect
      .poll(() => panel.getByTestId("label-image-said").innerText(), { timeout: 30_000 })
      .toMatch(/is stored/);
    await panel.getByTestId("label-image").first().locator("img").waitFor();
    await expect.poll(() => panel.getByTestId("label-image").first().innerText()).toMatch(/Side A label/);
    // The thumbnail really loaded (naturalWidth > 0), not a broken image.
    await expect
      .poll(() =>
        panel
          .locator("img")
          .first()
          .evaluate((img: HTMLImageElement) => img.naturalWidth),
      )
      .toBeGreaterThan(0);
    await panel.scrollIntoViewIfNeeded();
    await screenshot(page, "disc-label-images");

    // A second picture, of the next disc's label on the cart: the archivist withdraws it, saying why.
    const wrong = path.join(tmp, "next-disc-label.png");
    await fs.writeFile(wrong, await labelPicture("png", 400));
    await panel.getByTestId("label-image-file").setInputFiles(wrong);
    await panel.getByTestId("label-image-add").click();
    await expect.poll(() => panel.getByTestId("label-image").count(), { timeout: 30_000 }).toBe(2);
    const mistaken = panel.getByTestId("label-image").last();
    await mistaken.getByTestId("label-image-withdraw-open").click();
    const withdraw = panel.getByTestId("label-image-withdraw-form");
    await expect(withdraw.innerText()).resolves.toMatch(/next-disc-label\.png/);
    await expect(withdraw.getByTestId("label-image-withdraw").isDisabled()).resolves.toBe(true);
    await withdraw.getByTestId("label-image-withdraw-reason").fill("The label of the next disc on the cart.");
    await screenshot(page, "label-image-withdraw");
    await withdraw.getByTestId("label-image-withdraw").click();
    await expect.poll(() => panel.getByTestId("label-image-said").innerText()).toMatch(/is withdrawn/);
    await expect.poll(() => panel.getByTestId("label-image").count()).toBe(1);
    await expect.poll(() => panel.getByTestId("label-image").first().innerText()).toMatch(/Side A label/);
    await page.close();
  }, 90_000);

  it("shows the label beside the curve on the bench, and on the review page", async () => {
    const bench = await signedIn("engineer");
    await bench.goto(`${appUrl}/bench/${sideId}`);
    const onBench = bench.locator("#bench-label").getByTestId("label-image");
    await onBench.first().waitFor({ timeout: 30_000 });
    expect(await onBench.count()).toBe(1);
    await screenshot(bench, "bench-label");
    await bench.close();

    const review = await signedIn("curator");
    await review.goto(`${appUrl}/review/${sideId}`);
    const onReview = review.getByTestId("label-images").getByTestId("label-image");
    await onReview.first().waitFor({ timeout: 30_000 });
    await expect
      .poll(() =>
        review
          .getByTestId("label-images")
          .locator("img")
          .first()
          .evaluate((i: HTMLImageElement) => i.naturalWidth),
      )
      .toBeGreaterThan(0);
    await screenshot(review, "review-label");
    await review.close();
  }, 90_000);

  it("lets the admin set the lab's contact and the curator deliver and download a valid bag", async () => {
    await fixityNow(c, discId, [sideId]);
    const ok = await api(`/api/sides/${sideId}/review`, {
      cookie: c.curator,
      method: "POST",
      body: { decision: "approved" },
    });
    expect(ok.status).toBe(200);

    const admin = await signedIn("admin");
    await admin.goto(`${appUrl}/audit?disc=${discId}`);
    const form = admin.getByTestId("contact-settings");
    await form.getByLabel("Contact person").fill("Orla Venn");
    await form.getByLabel("Contact e-mail").fill("deposits@marrowhill.example");
    await form.getByRole("button", { name: "Save the contact" }).click();
    await form.getByText("Saved: the next bag carries this contact.").waitFor();
    await form.scrollIntoViewIfNeeded();
    await screenshot(admin, "audit-contact");
    await admin.close();

    const page = await signedIn("curator");
    await page.goto(`${appUrl}/audit?disc=${discId}`);
    const exportsPanel = page.getByTestId("export-links");
    const zipHref = await exportsPanel.getByTestId("export-zip").getAttribute("href");
    expect(zipHref).toBe(`/api/discs/${discId}/export?format=zip`);
    await page.getByTestId("deliveries-discs").getByTestId("deliver-bag").click();
    await expect
      .poll(() => page.getByTestId("deliveries-discs").getByTestId("delivery").first().innerText(), {
        timeout: 60_000,
      })
      .toMatch(/^delivered/);
    await exportsPanel.scrollIntoViewIfNeeded();
    await screenshot(page, "audit-bag");

    // The page's link, fetched with the curator's session: a valid bag with the label in it.
    const cookies = await page.context().cookies();
    const res = await fetch(`${appUrl}${zipHref}`, {
      headers: { cookie: cookies.map((k) => `${k.name}=${k.value}`).join("; ") },
    });
    expect(res.status).toBe(200);
    const zip = path.join(tmp, "bag.zip");
    await fs.writeFile(zip, Buffer.from(await res.arrayBuffer()));
    await run("unzip", ["-q", zip, "-d", path.join(tmp, "bag")]);
    const [name] = await fs.readdir(path.join(tmp, "bag"));
    const report = await validateBag(path.join(tmp, "bag", name));
    expect(report.problems).toEqual([]);
    expect(report.payload).toContain(`data/labels/${shelfMark}-A-label-1.png`);
    expect(Object.fromEntries(report.info)["Contact-Name"]).toBe("Orla Venn");
    await page.close();
  }, 180_000);
});
