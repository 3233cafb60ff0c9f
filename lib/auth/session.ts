import "server-only";
import { getServerSession } from "next-auth";
import { decode } from "next-auth/jwt";
import { cookies } from "next/headers";
import { cache } from "react";
import { db } from "../../db";
import { env } from "../env";
import { AppError } from "../http/errors";
import { authOptions } from "./options";
import { sessionCookieName } from "./session-cookie";
import { type Action, actions, can } from "./permissions";
import { roleLabels } from "./roles";
import type { SessionUser } from "./session-user";

/**
 * The session cookie's claims: who signed in and under which session version. The cookie is
 * next-auth's encrypted JWT; `decode` decrypts it, checks its integrity and refuses it once
 * expired, as getServerSession does, without the rest of getServerSession's work (building
 * next-auth's handler and encrypting a refreshed cookie that a server render cannot send).
 * next-auth splits a cookie over 4 KB into `name.0`, `name.1` …: they are joined in order.
 */
async function sessionClaims(): Promise<{ uid?: string; sv?: number } | null> {
  const secret = env().NEXTAUTH_SECRET;
  if (!secret) {
    // No configured secret (a bare `next dev`): next-auth derives its own; let it read the cookie.
    const session = await getServerSession(authOptions);
    return session?.user?.id ? { uid: session.user.id, sv: session.user.sessionVersion } : null;
  }
  const jar = await cookies();
  const name = sessionCookieName();
  let token = jar.get(name)?.value;
  if (!token) {
    const chunks = jar
      .getAll()
      .filter((c) => c.name.startsWith(`${name}.`))
      .map((c) => ({ n: Number(c.name.slice(name.length + 1)), value: c.value }))
      .filter((c) => Number.isInteger(c.n))
      .sort((a, b) => a.n - b.n);
    token = chunks.length > 0 ? chunks.map((c) => c.value).join("") : undefined;
  }
  if (!token) return null;
  try {
    const claims = await decode({ token, secret });
    return claims ? { uid: claims.uid, sv: claims.sv } : null;
  } catch {
    return null; // tampered with, made with another secret, or expired
  }
}

/**
 * The signed-in person, read afresh from the database on every request: a role change
 * or a deactivation takes effect at the next request, whatever the session cookie says.
 * A cookie signed in under an older session version (lib/auth/session-version.ts: the
 * person signed out, reset the password, was deactivated or changed role since) is no
 * session at all. Within one server render (a page and its layout) it is read once.
 */
export const currentUser = cache(async (): Promise<SessionUser | null> => {
  const claims = await sessionClaims();
  const id = claims?.uid;
  if (typeof id !== "string") return null;
  const user = await db
    .selectFrom("users")
    .select(["id", "email", "name", "role", "active", "session_version"])
    .where("id", "=", id)
    .executeTakeFirst();
  if (!user || !user.active) return null;
  if (claims?.sv !== user.session_version) return null;
  return { id: user.id, email: user.email, name: user.name, role: user.role };
});

/** The one server-side permission check: every route handler and server action calls it. */
export async function requirePermission(action: Action): Promise<SessionUser> {
  const user = await currentUser();
  if (!user) throw new AppError("unauthenticated", 401, "Sign in to continue.");
  if (!can(user.role, action)) {
    throw new AppError(
      "forbidden",
      403,
      `As ${roleLabels[user.role].toLowerCase()} you may not ${actions[action]}.`,
    );
  }
  return user;
}
