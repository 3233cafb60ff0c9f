// Debian's chromium driven by playwright-core (never a browser download); playwright
// gives each launch a fresh, empty profile folder.
import { mkdirSync } from "node:fs";
import path from "node:path";
import { type Browser, chromium, type Page } from "playwright-core";
import { appUrl } from "./app";

/**
 * Every Content-Security-Policy violation chromium reports on any page of this test file
 * (tests/support/e2e-setup.ts fails the file if there is one): the end-to-end tests
 * double as the proof that the pages work under the policy.
 */
export const cspViolations: string[] = [];

function watchCsp(page: Page): void {
  page.on("console", (m) => {
    if (/Content Security Policy/i.test(m.text())) cspViolations.push(`${page.url()}: ${m.text()}`);
  });
}

export async function launchBrowser(): Promise<Browser> {
  const browser = await launch();
  // browser.newPage() makes its context through newContext() as well.
  const newContext = browser.newContext.bind(browser);
  browser.newContext = async (...args) => {
    const context = await newContext(...args);
    // Some refusals (WebAssembly compilation, say) throw in the page without a console
    // line: the violation event reports every one.
    await context.addInitScript(() => {
      document.addEventListener("securitypolicyviolation", (e) =>
        console.error(
          `Content Security Policy violation: ${e.effectiveDirective} blocked ${e.blockedURI || "inline"}`,
        ),
      );
    });
    context.on("page", watchCsp);
    return context;
  };
  return browser;
}

function launch(): Promise<Browser> {
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
    args: [
      "--no-sandbox",
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
    ],
  });
}

export const screenshotDir = path.join(process.cwd(), "storage", "test", "screenshots");

export async function screenshot(page: Page, name: string): Promise<string> {
  mkdirSync(screenshotDir, { recursive: true });
  const file = path.join(screenshotDir, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

/** Page object for the sign-in form. */
export class SignInPage {
  constructor(readonly page: Page) {}
  async open(): Promise<this> {
    await this.page.goto(`${appUrl}/sign-in`);
    return this;
  }
  async signIn(email: string, password: string): Promise<void> {
    await this.page.getByLabel("E-mail").fill(email);
    await this.page.getByLabel("Password").fill(password);
    await this.page.getByRole("button", { name: "Sign in" }).click();
  }
}

/** Page object for the signed-in shell. */
export class Shell {
  constructor(readonly page: Page) {}
  async navLabels(): Promise<string[]> {
    const nav = this.page.getByTestId("lab-nav");
    await nav.waitFor();
    return (await nav.getByRole("link").allInnerTexts()).map((t) => t.trim());
  }
}
