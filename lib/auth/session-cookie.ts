import { env } from "../env";

/**
 * Session cookies are `Secure` (and named `__Secure-…`) when the app is reached over HTTPS.
 * Said here once, so next-auth (lib/auth/options.ts), currentUser() (lib/auth/session.ts)
 * and proxy.ts agree on the cookie and its name.
 */
export function secureCookies(): boolean {
  return env().APP_URL.startsWith("https://");
}

/** The name of next-auth's session cookie. */
export function sessionCookieName(): string {
  return `${secureCookies() ? "__Secure-" : ""}next-auth.session-token`;
}
