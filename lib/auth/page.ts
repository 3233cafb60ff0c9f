import "server-only";
import { forbidden, redirect } from "next/navigation";
import type { Action } from "./permissions";
import { can } from "./permissions";
import { currentUser } from "./session";
import type { SessionUser } from "./session-user";

/**
 * For pages: the signed-in person if their role allows `action`. Visitors go to the
 * sign-in page; a person without the right role gets the 403 page.
 */
export async function requirePageAccess(action: Action): Promise<SessionUser> {
  const user = await currentUser();
  if (!user) redirect("/sign-in");
  if (!can(user.role, action)) forbidden();
  return user;
}
