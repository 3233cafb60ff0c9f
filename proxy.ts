import { getToken } from "next-auth/jwt";
import { type NextRequest, NextResponse } from "next/server";
import { apiPolicy, bucketOrigins, newNonce, pagePolicy } from "./lib/http/csp";
import { checkSameOrigin, originMessages, stateChangingMethods } from "./lib/http/same-origin";
import { env } from "./lib/env";
import { secureCookies } from "./lib/auth/session-cookie";

// Pages anyone may open: signing in, accepting an invitation, resetting a password.
const publicPages = /^\/(sign-in|invite\/|reset)/;

/**
 * Runs before every page and API answer (not the static files):
 * - gives each page a Content-Security-Policy with a fresh script nonce (Next.js reads it
 *   from the request's policy and puts it on its scripts; the root layout reads the request
 *   headers, so every page renders per request and carries it); API answers get a policy
 *   that loads nothing;
 * - refuses a form post to a page (a server action) from another site, with the same rule
 *   as route() (lib/http/same-origin.ts): Next.js itself compares Origin with Host, but lets
 *   a request without Origin through;
 * - sends visitors who are not signed in to the sign-in page. This is a convenience, not
 *   the security boundary: every page, route handler and action checks on the server.
 * The headers that never vary (X-Frame-Options, nosniff, Referrer-Policy) are in next.config.mjs.
 */
export async function proxy(req: NextRequest) {
  const { pathname } = req.nextUrl;
  const e = env();
  if (pathname.startsWith("/api/")) {
    // Route handlers check where a request comes from themselves (lib/http/route.ts);
    // next-auth's own endpoints (/api/auth/*) are guarded by its CSRF token.
    const res = NextResponse.next();
    res.headers.set("content-security-policy", apiPolicy);
    return res;
  }

  if (stateChangingMethods.has(req.method.toUpperCase())) {
    const verdict = checkSameOrigin(req.headers, new URL(e.APP_URL).origin);
    if (!verdict.ok) {
      return NextResponse.json(
        { error: { code: "cross_site", message: originMessages[verdict.reason] } },
        { status: 403, headers: { "content-security-policy": apiPolicy, "cache-control": "no-store" } },
      );
    }
  }

  if (!publicPages.test(pathname)) {
    const token = await getToken({ req, secret: e.NEXTAUTH_SECRET, secureCookie: secureCookies() });
    if (!token) {
      const url = req.nextUrl.clone();
      url.pathname = "/sign-in";
      url.search = pathname === "/" ? "" : `?next=${encodeURIComponent(pathname + req.nextUrl.search)}`;
      return NextResponse.redirect(url);
    }
  }

  const nonce = newNonce();
  const policy = pagePolicy({
    nonce,
    development: e.NODE_ENV === "development",
    bucketOrigins: bucketOrigins({
      s3Endpoint: e.S3_ENDPOINT,
      bucket: e.S3_BUCKET,
      forcePathStyle: e.S3_FORCE_PATH_STYLE,
    }),
    https: e.APP_URL.startsWith("https:"),
  });
  const requestHeaders = new Headers(req.headers);
  requestHeaders.set("x-nonce", nonce);
  requestHeaders.set("content-security-policy", policy);
  const res = NextResponse.next({ request: { headers: requestHeaders } });
  res.headers.set("content-security-policy", policy);
  return res;
}

export const config = {
  // Everything but the build's static files and the icons.
  matcher: ["/((?!_next/static|_next/image|favicon.ico|icon.svg).*)"],
};
