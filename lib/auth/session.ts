import "server-only";
import { getServerSession } from "next-auth";
import { db } from "../../db";
import { AppError } from "../http/errors";
import { authOptions } from "./options";
import { type Action, actions, can } from "./permissions";
import { roleLabels } from "./roles";
import type { SessionUser } from "./session-user";

/**
 * The signed-in person, read afresh from the database on every request: a role change
 * or a deactivation takes effect at the next request, whatever the session cookie says.
 * A cookie signed in under an older session version (lib/auth/session-version.ts: the
 * person signed out, reset the password, was deactivated or changed role since) is no
 * session at all.
 */
export async function currentUser(): Promise<SessionUser | null> {
  const session = await getServerSession(authOptions);
  const id = session?.user?.id;
  if (!id) return null;
  const user = await db
    .selectFrom("users")
    .select(["id", "email", "name", "role", "active", "session_version"])
    .where("id", "=", id)
    .executeTakeFirst();
  if (!user || !user.active) return null;
  if (session.user?.sessionVersion !== user.session_version) return null;
  return { id: user.id, email: user.email, name: user.name, role: user.role };
}

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
