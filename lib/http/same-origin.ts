// Where a state-changing request comes from. A signed-in person's browser sends the
// session cookie with any request to the app, including a form another site makes it
// post (SameSite=Lax treats 127.0.0.1 on another port as the same site), so every
// request that changes something must show that it comes from the app's own pages.
// Pure functions of the headers: route() (lib/http/route.ts) and proxy.ts both use them.

/** Methods that change state: the only ones checked (GET and HEAD change nothing). */
export const stateChangingMethods = new Set(["POST", "PUT", "PATCH", "DELETE"]);

export type OriginVerdict = { ok: true } | { ok: false; reason: "cross-site" | "unknown" };

function originOf(url: string): string | null {
  try {
    const u = new URL(url);
    return u.protocol === "http:" || u.protocol === "https:" ? u.origin : null;
  } catch {
    return null;
  }
}

/**
 * Decides from the headers alone whether a request comes from the app's own origin:
 *
 * 1. `Origin`, which every current browser sends with every POST, PUT, PATCH and DELETE
 *    (same-origin ones included), must be the app's origin exactly; "null" (a sandboxed
 *    frame, a data: page, some redirects) is refused.
 * 2. Without it, `Sec-Fetch-Site` must be "same-origin".
 * 3. Without either, `Referer` must lie on the app's origin.
 * 4. With none of the three the request is refused: no browser the lab uses leaves out all
 *    three on a state-changing request, so such a request is a script, and a script can
 *    say where it comes from (send `Origin: <APP_URL>`). Refusing is the careful default.
 */
export function checkSameOrigin(headers: Headers, appOrigin: string): OriginVerdict {
  const origin = headers.get("origin");
  if (origin !== null) return origin === appOrigin ? { ok: true } : { ok: false, reason: "cross-site" };
  const site = headers.get("sec-fetch-site");
  if (site !== null) return site === "same-origin" ? { ok: true } : { ok: false, reason: "cross-site" };
  const referer = headers.get("referer");
  if (referer !== null)
    return originOf(referer) === appOrigin ? { ok: true } : { ok: false, reason: "cross-site" };
  return { ok: false, reason: "unknown" };
}

export const originMessages = {
  "cross-site": "This request came from another site, so it was refused. Use Rillbook's own pages.",
  unknown:
    "This request did not say where it came from (no Origin, Sec-Fetch-Site or Referer " +
    "header), so it was refused. Scripts must send the header Origin with the app's address.",
} as const;

/** The media type of a content-type header without its parameters, lower-cased ("application/json"). */
export function mediaType(contentType: string | null): string | null {
  if (!contentType) return null;
  return contentType.split(";")[0].trim().toLowerCase() || null;
}
