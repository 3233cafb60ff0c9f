// The archivist imports a spreadsheet through the import page: the first file has a bad
// row, the page names it, the fixed file goes in, and the disc is in the catalogue.
import type { Browser } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { catalogueColumns } from "@/lib/catalogue/csv-format";
import { api, appUrl, signInCookie } from "../support/app";
import { launchBrowser, screenshot, SignInPage } from "../support/browser";

let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});

afterAll(async () => {
  await browser?.close();
});

const archivist = demoAccounts.find((a) => a.role === "archivist")!;

function csvOf(rows: Partial<Record<(typeof catalogueColumns)[number], string>>[]): string {
  const cell = (v: string) => (/[",\r\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v);
  return (
    [
      catalogueColumns.join(","),
      ...rows.map((r) => catalogueColumns.map((c) => cell(r[c] ?? "")).join(",")),
    ].join("\n") + "\n"
  );
}

describe("importing a spreadsheet on the import page", () => {
  it("shows the bad row, takes the fixed file, and the discs reach the catalogue", async () => {
    const stamp = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 5)}`.toUpperCase();
    const cookie = await signInCookie(archivist.email, archivist.password);
    const identifier = `E2E-${stamp}`;
    const acc = await api("/api/accessions", {
      cookie,
      method: "POST",
      body: { identifier, source: "Transcription discs from a closed studio", receivedOn: "2026-11-30" },
    });
    expect(acc.status).toBe(201);

    const shelf = (n: number) => `E${stamp}-${n}`;
    const disc = {
      accession: identifier,
      format: "transcription",
      base: "aluminium",
      diameter_in: "16",
      speed_rpm: "33.33",
      groove: "coarse",
      cut: "vertical",
    };
    const rows = [
      {
        ...disc,
        shelf_mark: shelf(1),
        side: "A",
        matrix_number: `MX-${stamp}`,
        take: "1",
        title: "Evening programme, part 1",
      },
      { ...disc, shelf_mark: shelf(1), side: "B", take: "1", title: "Evening programme, part 2" },
      { ...disc, shelf_mark: shelf(2), speed_rpm: "thirty-three" },
    ];

    const context = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
    const page = await context.newPage();
    await page.goto(`${appUrl}/sign-in`);
    await new SignInPage(page).signIn(archivist.email, archivist.password);
    await page.waitForURL(`${appUrl}/`);
    await page.goto(`${appUrl}/catalogue/import`);
    await page.getByRole("heading", { name: "Import discs from a spreadsheet" }).waitFor();

    // First file: row 4 has a speed that is not a number.
    await page
      .getByTestId("import-file")
      .setInputFiles({ name: "transcriptions.csv", mimeType: "text/csv", buffer: Buffer.from(csvOf(rows)) });
    const errors = page.getByTestId("import-errors");
    await errors.waitFor();
    const first = page.getByTestId("import-error").first();
    await expect(first.locator("td").nth(0).innerText()).resolves.toBe("4");
    await expect(first.locator("td").nth(1).innerText()).resolves.toBe("speed_rpm");
    await expect(first.locator("td").nth(2).innerText()).resolves.toMatch(/Nominal speed must be a number/);
    await expect(page.getByTestId("import-confirm").isDisabled()).resolves.toBe(true);
    await screenshot(page, "catalogue-import-errors");

    // Fixed file: the same rows with the speed corrected.
    rows[2] = { ...rows[2], speed_rpm: "33 1/3" };
    await page
      .getByTestId("import-file")
      .setInputFiles({ name: "transcriptions.csv", mimeType: "text/csv", buffer: Buffer.from(csvOf(rows)) });
    const confirm = page.getByTestId("import-confirm");
    // The first file's discs were listed too: wait for its problems to go.
    await page.getByTestId("import-errors").waitFor({ state: "detached" });
    await page.getByTestId("import-to-add").waitFor();
    await expect(confirm.innerText()).resolves.toBe("Import 2 discs");
    await expect(confirm.isEnabled()).resolves.toBe(true);
    await screenshot(page, "catalogue-import-ready");
    await confirm.click();

    const done = page.getByTestId("import-done");
    await done.waitFor();
    await expect(done.innerText()).resolves.toMatch(/Imported 2 discs with 2 sides/);
    await screenshot(page, "catalogue-import-done");

    // The discs are in the catalogue: asked from the signed-in page, as the catalogue asks.
    const found = await page.evaluate(async (q) => {
      const res = await fetch(`/api/discs?q=${encodeURIComponent(q)}`, {
        headers: { accept: "application/json" },
      });
      return (await res.json()) as {
        rows: { shelfMark: string; sides: { designation: string; matrixNumber: string }[] }[];
      };
    }, shelf(1));
    expect(found.rows.map((r) => r.shelfMark)).toContain(shelf(1));
    expect(found.rows.find((r) => r.shelfMark === shelf(1))!.sides.map((s) => s.matrixNumber)).toEqual([
      `MX-${stamp}`,
      "",
    ]);

    // The round trip: export the accession, correct a label and a title in the spreadsheet, bring it back.
    await page.goto(`${appUrl}/catalogue/import`);
    await page.getByRole("heading", { name: "Import discs from a spreadsheet" }).waitFor();
    const exported = await fetch(`${appUrl}/api/discs/export?accession=${acc.body.accession.id}`, {
      headers: { cookie },
    });
    expect(exported.status).toBe(200);
    const edited = (await exported.text())
      .replace("Evening programme, part 2", "Evening programme, part 2 (ends early)")
      .replaceAll(`${shelf(2)},${identifier},,`, `${shelf(2)},${identifier},Studio Rill,`);
    await page
      .getByTestId("import-file")
      .setInputFiles({ name: "corrected.csv", mimeType: "text/csv", buffer: Buffer.from(edited) });
    await page.getByTestId("import-updates").waitFor();
    const updates = page.getByTestId("import-update");
    await expect(updates.count()).resolves.toBe(2);
    await expect(updates.nth(0).innerText()).resolves.toMatch(
      /Side B · title\s+Evening programme, part 2\s+→\s+Evening programme, part 2 \(ends early\)/,
    );
    await expect(updates.nth(1).innerText()).resolves.toMatch(/Label\s+—\s+→\s+Studio Rill/);
    await expect(page.getByTestId("import-clear-empty").isVisible()).resolves.toBe(true);
    await expect(confirm.innerText()).resolves.toBe("Update 2 discs");
    await screenshot(page, "catalogue-import-updates");
    await confirm.click();
    await expect(page.getByTestId("import-done").innerText()).resolves.toMatch(/Updated 2 discs/);

    await page.getByTestId("import-catalogue-link").click();
    await page.waitForURL(`${appUrl}/catalogue`);
    await context.close();
  });
});
