// Each demo role signs in through the real form and sees its own navigation; an admin
// invites a person, the mail is read from the SMTP sink, and the invitee joins through
// the page. Screenshots of the sign-in page and the shell land in storage/test/screenshots.
import type { Browser } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { can } from "@/lib/auth/permissions";
import { navItems } from "@/lib/navigation";
import { appUrl, linkIn, uniqueEmail, waitForMail } from "../support/app";
import { launchBrowser, screenshot, Shell, SignInPage } from "../support/browser";

let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});

afterAll(async () => {
  await browser?.close();
});

describe("signing in", () => {
  it("shows the sign-in page to a visitor", async () => {
    const page = await browser.newPage({ viewport: { width: 1440, height: 900 } });
    await page.goto(`${appUrl}/people`);
    await page.waitForURL(/\/sign-in\?next=%2Fpeople/);
    await screenshot(page, "sign-in");
    await page.close();
  });

  for (const account of demoAccounts) {
    it(`lets the ${account.role} in with the navigation of that role`, async () => {
      const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
      const page = await context.newPage();
      await (await new SignInPage(page).open()).signIn(account.email, account.password);
      await page.waitForURL(`${appUrl}/`);
      const labels = await new Shell(page).navLabels();
      expect(labels).toEqual(navItems.filter((i) => can(account.role, i.action)).map((i) => i.label));
      await expect(page.getByTestId("current-user").innerText()).resolves.toBe(account.name);
      await screenshot(page, `shell-${account.role}`);
      if (!can(account.role, "people:read")) {
        const res = await page.goto(`${appUrl}/people`);
        expect(res?.status()).toBe(403);
        await page.getByTestId("forbidden").waitFor();
      }
      await context.close();
    });
  }

  it("says clearly when the password is wrong", async () => {
    const page = await browser.newPage();
    await (await new SignInPage(page).open()).signIn(demoAccounts[1].email, "not the password at all");
    await expect(page.getByTestId("sign-in-error").innerText()).resolves.toMatch(/do not match an account/);
    await page.close();
  });
});

describe("inviting a person", () => {
  it("sends the invitation by mail and lets the invitee join through the page", async () => {
    const admin = demoAccounts.find((a) => a.role === "admin")!;
    const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const page = await context.newPage();
    await (await new SignInPage(page).open()).signIn(admin.email, admin.password);
    await page.waitForURL(`${appUrl}/`);
    await page.goto(`${appUrl}/people`);

    // Bad input first: the field says what is wrong.
    const form = page.getByTestId("invite-form");
    await form.getByLabel("E-mail").fill("not-an-address");
    await form.getByRole("button", { name: "Send invitation" }).click();
    await expect(page.getByTestId("error-invite-email").innerText()).resolves.toMatch(/not a valid e-mail/);

    const email = uniqueEmail("new-engineer");
    await form.getByLabel("E-mail").fill(email);
    await form.getByLabel("Role").selectOption("engineer");
    await form.getByRole("button", { name: "Send invitation" }).click();
    await page.getByText(`Invitation sent to ${email}`).waitFor();
    await page.getByTestId("open-invitations").getByText(email).waitFor();
    await screenshot(page, "people");

    const mail = await waitForMail((m) => m.to.includes(email));
    expect(mail.subject).toMatch(/invited/);
    const link = linkIn(mail.text, "/invite/");

    const invitee = await browser.newContext({ viewport: { width: 1280, height: 860 } });
    const p2 = await invitee.newPage();
    await p2.goto(link);
    await p2.getByText("You are invited as transfer engineer").waitFor();
    await p2.getByLabel("Your name").fill("Noor Hallam");
    await p2.getByLabel("Password", { exact: true }).fill("short");
    await p2.getByLabel("The same password again").fill("short");
    await p2.getByRole("button", { name: "Create my account" }).click();
    await expect(p2.getByTestId("error-password").innerText()).resolves.toMatch(/at least 12 characters/);
    await screenshot(p2, "invitation-errors");
    await p2.getByLabel("Password", { exact: true }).fill("a stylus and a steady hand");
    await p2.getByLabel("The same password again").fill("a stylus and a steady hand");
    await p2.getByRole("button", { name: "Create my account" }).click();
    await p2.waitForURL(/\/sign-in\?welcome=1/);
    await new SignInPage(p2).signIn(email, "a stylus and a steady hand");
    await p2.waitForURL(`${appUrl}/`);
    expect(await new Shell(p2).navLabels()).toContain("Transfer bench");

    // The link is spent.
    await p2.goto(link);
    await p2.getByText("already been used").waitFor();
    await invitee.close();
    await context.close();
  });
});
