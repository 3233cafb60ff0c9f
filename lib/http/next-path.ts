// Where the sign-in page sends a person afterwards (`/sign-in?next=…`). Only a path on
// the app's own origin is taken; anything else, however it is spelled, goes home.

const probe = "http://rillbook.invalid";

/**
 * The same-origin path (with its query and fragment) that `next` names, or "/". Browsers
 * read "\" as "/" in web addresses and drop tabs and line breaks from them, so
 * "/\evil.example" and "/<TAB>/evil.example" are "//evil.example", another site: any
 * backslash or control character is refused outright, then the path is resolved as the
 * browser would and kept only if it stays on the origin and does not begin with "//".
 */
export function safeNextPath(next: string | null | undefined): string {
  if (!next || next.length > 2000) return "/";
  if (!next.startsWith("/") || next.startsWith("//")) return "/";
  if (/[\\\u0000-\u001f\u007f-\u009f\u2028\u2029]/.test(next)) return "/";
  let url: URL;
  try {
    url = new URL(next, probe);
  } catch {
    return "/";
  }
  if (url.origin !== probe || url.pathname.startsWith("//")) return "/";
  return `${url.pathname}${url.search}${url.hash}`;
}
