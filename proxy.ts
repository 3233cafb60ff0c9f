import { getToken } from "next-auth/jwt";
import { type NextRequest, NextResponse } from "next/server";
import { env } from "./lib/env";

// Sends visitors who are not signed in to the sign-in page. This is a convenience,
// not the security boundary: every page, route handler and action checks on the server.
export async function proxy(req: NextRequest) {
  const token = await getToken({ req, secret: env().NEXTAUTH_SECRET });
  if (token) return NextResponse.next();
  const url = req.nextUrl.clone();
  url.pathname = "/sign-in";
  url.search = req.nextUrl.pathname === "/" ? "" : `?next=${encodeURIComponent(req.nextUrl.pathname + req.nextUrl.search)}`;
  return NextResponse.redirect(url);
}

export const config = {
  // Everything but the API (which answers 401 itself), the public auth pages and static files.
  matcher: ["/((?!api/|_next/|sign-in|invite/|reset|favicon.ico|icon.svg).*)"],
};
