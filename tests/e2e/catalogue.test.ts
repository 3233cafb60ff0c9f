// The catalogue end to end: an archivist records an accession, catalogues a disc with
// two sides through the form, finds it by its matrix number, and assigns it to the
// engineer Wen Okafor from the table; Wen sees both sides in her queue. Then two people
// edit the same disc and the second save is stopped with the other person's change
// shown. Screenshots "disc-form", "catalogue", "disc-page", "queue" and
// "disc-conflict" land in storage/test/screenshots.
import type { Browser, BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { appUrl, sameOrigin } from "../support/app";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";

let browser: Browser;
const archivist = demoAccounts.find((a) => a.role === "archivist")!;
const engineer = demoAccounts.find((a) => a.role === "engineer")!;
const stamp = () => `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase();

beforeAll(async () => {
  browser = await launchBrowser();
});

afterAll(async () => {
  await browser?.close();
});

async function signedIn(account: {
  email: string;
  password: string;
}): Promise<{ context: BrowserContext; page: Page }> {
  const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
  const page = await context.newPage();
  await (await new SignInPage(page).open()).signIn(account.email, account.password);
  await page.waitForURL(`${appUrl}/`);
  return { context, page };
}

describe("catalogue", () => {
  it("takes a disc from accession to an engineer's queue", async () => {
    const run = stamp();
    const accession = `E2E-ACC-${run}`;
    const shelfMark = `E2E-${run}`;
    const matrixA = `MX${run}A`;
    const matrixB = `MX${run}B`;
    const { context, page } = await signedIn(archivist);

    // An accession, recorded on its own page.
    await page.goto(`${appUrl}/catalogue/accessions`);
    const accForm = page.getByTestId("accession-form");
    await accForm.getByTestId("accession-form-identifier").fill(accession);
    await accForm.getByTestId("accession-form-source").fill("Deposit by the end-to-end test");
    await accForm.getByTestId("accession-form-save").click();
    await page.getByTestId("accession-created").getByText(accession).waitFor();
    await page.getByTestId("accessions-table").getByText(accession).waitFor();

    // The disc, by hand. A missing shelf mark is refused beside the field.
    await page.goto(`${appUrl}/catalogue`);
    await page.getByTestId("new-disc").click();
    await page.waitForURL(/\/catalogue\/new/);
    const form = page.getByTestId("disc-form");
    await form
      .locator("#disc-accessionId")
      .selectOption({ label: `${accession} — Deposit by the end-to-end test` });
    await page.getByTestId("save-disc").click();
    await expect(page.getByTestId("error-disc-shelfMark").innerText()).resolves.toMatch(/shelf mark/i);

    await form.getByLabel("Shelf mark").fill(shelfMark);
    await form.getByLabel("Label", { exact: true }).fill("Quillstone");
    await form.getByLabel("Catalogue number").fill(`Q ${run}`);
    await form.getByLabel("Format").selectOption("shellac_78");
    await form.getByTestId("side-0-matrix").fill(matrixA);
    await form.getByTestId("side-0-take").fill("2");
    await form.getByTestId("side-0-title").fill("Harbour Lights Waltz");
    await form.getByTestId("side-0-performers").fill("The Alder Street Band");
    await form.getByTestId("side-1-matrix").fill(matrixB);
    await form.getByTestId("side-1-take").fill("1");
    await form.getByTestId("side-1-title").fill("Lantern Reel");
    await form.getByTestId("side-1-performers").fill("The Alder Street Band");
    await screenshot(page, "disc-form");
    await page.getByTestId("save-disc").click();
    await page.waitForURL(/\/catalogue\/[0-9a-f-]{36}$/);
    const discUrl = page.url();
    await page.getByRole("heading", { name: shelfMark }).waitFor();

    // Found by one side's matrix number, then assigned in bulk from the table.
    await page.goto(`${appUrl}/catalogue`);
    await page.getByTestId("catalogue-search").fill(matrixB);
    await page.waitForURL(new RegExp(`q=${matrixB}`));
    const table = page.getByTestId("catalogue-table");
    await expect
      .poll(() => page.getByTestId("catalogue-count").innerText(), { timeout: 15_000 })
      .toMatch(/^1 disc matches/);
    await expect(table.locator("tbody tr").count()).resolves.toBe(1);
    await table.getByRole("link", { name: shelfMark }).waitFor();
    await table.getByLabel(`Select ${shelfMark}`).check();
    await page.getByTestId("bulk-assign-engineer").selectOption({ label: engineer.name });
    await page.getByTestId("bulk-assign-submit").click();
    await expect(page.getByTestId("bulk-assign-result").innerText()).resolves.toMatch(
      new RegExp(`2 sides assigned to ${engineer.name}`),
    );
    await table.getByText("Assigned").first().waitFor();
    await screenshot(page, "catalogue");

    // The disc page tells the story and shows the handling cautions.
    await page.goto(discUrl);
    await page
      .getByTestId("handling-cautions")
      .getByText(/Shellac is brittle/)
      .waitFor();
    await page.getByTestId("provenance-timeline").getByText(`assigned side A to ${engineer.name}`).waitFor();
    await page
      .getByTestId("provenance-timeline")
      .getByText(/catalogued the disc with 2 sides/)
      .waitFor();
    await expect(page.getByTestId("side-A").innerText()).resolves.toMatch(/Assigned/);
    await screenshot(page, "disc-page");
    await context.close();

    // The engineer finds both sides in her queue.
    const wen = await signedIn(engineer);
    await wen.page.goto(`${appUrl}/queue`);
    const queue = wen.page.getByTestId("queue-table");
    await queue.getByText(matrixA).waitFor();
    await queue.getByText(matrixB).waitFor();
    await expect(queue.getByRole("link", { name: shelfMark }).count()).resolves.toBe(2);
    await screenshot(wen.page, "queue");
    await wen.context.close();
  });

  it("stops the second of two concurrent edits and shows the other person's change", async () => {
    const run = stamp();
    const first = await signedIn(archivist);
    const second = await signedIn(archivist);

    const { accessions } = (await (await first.page.request.get(`${appUrl}/api/accessions`)).json()) as {
      accessions: { id: string }[];
    };
    const created = await first.page.request.post(`${appUrl}/api/discs`, {
      headers: sameOrigin,
      data: {
        accessionId: accessions[0].id,
        shelfMark: `E2E-EDIT-${run}`,
        labelName: "Varrowby",
        format: "shellac_78",
        nominalSpeedRpm: 78,
        groove: "coarse",
        cut: "lateral",
        sides: [{ designation: "A" }],
      },
    });
    expect(created.status()).toBe(201);
    const { disc } = (await created.json()) as { disc: { id: string } };

    await first.page.goto(`${appUrl}/catalogue/${disc.id}/edit`);
    await second.page.goto(`${appUrl}/catalogue/${disc.id}/edit`);
    await first.page.getByTestId("disc-form").waitFor();
    await second.page.getByTestId("disc-form").waitFor();
    // The accession list arrives after the form: the disc's own accession stays chosen.
    await expect.poll(() => second.page.locator("#disc-accessionId").inputValue()).toBe(accessions[0].id);

    await first.page.getByLabel("Label", { exact: true }).fill("Varrowby Gold Seal");
    await first.page.getByTestId("save-disc").click();
    await first.page.waitForURL(`${appUrl}/catalogue/${disc.id}`);

    await second.page.getByLabel("Label", { exact: true }).fill("Varrowby Red Label");
    await second.page.getByTestId("save-disc").click();
    const conflict = second.page.getByTestId("disc-conflict");
    await conflict.waitFor();
    await expect(conflict.innerText()).resolves.toMatch(/changed while you were editing/);
    const rows = conflict.getByTestId("conflict-fields");
    await rows.getByText("Varrowby Gold Seal").waitFor();
    await rows.getByText("Varrowby Red Label").waitFor();
    await screenshot(second.page, "disc-conflict");

    // Reloading their version keeps this person's edit, and the save then goes through.
    await second.page.getByTestId("conflict-reapply").click();
    await expect(second.page.getByLabel("Label", { exact: true }).inputValue()).resolves.toBe(
      "Varrowby Red Label",
    );
    await second.page.getByTestId("save-disc").click();
    await second.page.waitForURL(`${appUrl}/catalogue/${disc.id}`);
    await second.page
      .getByTestId("provenance-timeline")
      .getByText("Varrowby Gold Seal → Varrowby Red Label")
      .waitFor();

    await first.context.close();
    await second.context.close();
  });
});
