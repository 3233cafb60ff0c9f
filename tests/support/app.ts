// Talking to the running test app over HTTP, as a browser or a script would.
import { promises as fs } from "node:fs";
import path from "node:path";

export const appUrl = process.env.APP_URL ?? "http://127.0.0.1:3100";

/**
 * The header a browser sends with every state-changing request from the app's own pages.
 * The app refuses a POST, PUT, PATCH or DELETE that does not show where it comes from
 * (lib/http/same-origin.ts), so every test request that changes something sends it.
 */
export const sameOrigin = { origin: new URL(appUrl).origin } as const;

/**
 * Signs in through next-auth's credentials endpoint and returns the cookie header of the
 * session. `base`: another app than the test profile's (a drill's second app).
 */
export async function signInCookie(email: string, password: string, base = appUrl): Promise<string> {
  const csrfRes = await fetch(`${base}/api/auth/csrf`);
  const { csrfToken } = (await csrfRes.json()) as { csrfToken: string };
  const jar = cookiesOf(csrfRes);
  const res = await fetch(`${base}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", cookie: jar },
    body: new URLSearchParams({ csrfToken, email, password, json: "true" }),
  });
  const all = [jar, cookiesOf(res)].filter(Boolean).join("; ");
  if (!/next-auth\.session-token=/.test(all)) {
    throw new Error(`sign-in as ${email} failed: ${res.status} ${res.headers.get("location") ?? ""}`);
  }
  return all;
}

function cookiesOf(res: Response): string {
  return res.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .join("; ");
}

/** A JSON answer as the tests read it: untyped, its shape is what their assertions check. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- the assertions check the shape
export type Json = any;

export async function api(
  pathname: string,
  opts: { cookie?: string; method?: string; body?: unknown; base?: string } = {},
): Promise<{ status: number; body: Json }> {
  const base = opts.base ?? appUrl;
  const res = await fetch(`${base}${pathname}`, {
    method: opts.method ?? "GET",
    redirect: "manual",
    headers: {
      accept: "application/json",
      origin: new URL(base).origin,
      ...(opts.cookie ? { cookie: opts.cookie } : {}),
      ...(opts.body !== undefined ? { "content-type": "application/json" } : {}),
    },
    body: opts.body !== undefined ? JSON.stringify(opts.body) : undefined,
  });
  const text = await res.text();
  let body: unknown = text;
  try {
    body = JSON.parse(text);
  } catch {
    /* not JSON */
  }
  return { status: res.status, body };
}

export interface SunkMail {
  to: string;
  subject: string;
  text: string;
  file: string;
}

/** Waits for a message to reach the SMTP sink (the worker sends the outbox every second). */
export async function waitForMail(match: (m: SunkMail) => boolean, timeoutMs = 20_000): Promise<SunkMail> {
  const dir = process.env.MAIL_SINK_DIR;
  if (!dir) throw new Error("MAIL_SINK_DIR is not set: run the tests through `npm test`");
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const files = (await fs.readdir(dir).catch(() => [] as string[])).filter((f) => f.endsWith(".json"));
    for (const f of files) {
      const m = {
        ...(JSON.parse(await fs.readFile(path.join(dir, f), "utf8")) as Omit<SunkMail, "file">),
        file: f,
      };
      if (match(m)) return m;
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error("no matching message reached the mail sink in time");
}

export function linkIn(text: string, pathPrefix: string): string {
  const m = text.match(new RegExp(`https?://\\S+${pathPrefix}\\S+`));
  if (!m) throw new Error(`no ${pathPrefix} link in the message:\n${text}`);
  return m[0];
}

export function uniqueEmail(tag: string): string {
  return `${tag}-${Date.now().toString(36)}-${Math.random().toString(36).slice(2, 7)}@test.example`;
}
