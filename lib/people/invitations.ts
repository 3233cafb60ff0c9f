import "server-only";
import { sql } from "kysely";
import { db } from "../../db";
import type { Role } from "../auth/roles";
import { roleLabels } from "../auth/roles";
import { hashPassword } from "../auth/password";
import { hashToken, newToken } from "../auth/tokens";
import { env } from "../env";
import { AppError } from "../http/errors";
import { enqueueMail } from "../mail/outbox";
import { invitationMail } from "../mail/templates";
import { acceptInvitationSchema, inviteSchema } from "../validation/people";
import { recordPeopleChange } from "./changes";
import type { SessionUser } from "../auth/session-user";

export const invitationLifetimeHours = 72;

/** Admin invites a person: invitation row, outbox mail and people change in one transaction. */
export async function invitePerson(
  actor: SessionUser,
  input: { email: unknown; role: unknown },
): Promise<{ invitationId: string }> {
  const { email, role } = inviteSchema.parse(input);
  const { token, hash } = newToken();
  const expiresAt = new Date(Date.now() + invitationLifetimeHours * 3600_000);
  return db.transaction().execute(async (trx) => {
    const existing = await trx.selectFrom("users").select("id").where("email", "=", email).executeTakeFirst();
    if (existing)
      throw new AppError("conflict", 409, `${email} already has an account.`, {
        email: ["Already has an account."],
      });
    // A fresh invitation replaces any open one for the same address.
    await trx
      .updateTable("invitations")
      .set({ revoked_at: sql`now()` })
      .where("email", "=", email)
      .where("accepted_at", "is", null)
      .where("revoked_at", "is", null)
      .execute();
    const inv = await trx
      .insertInto("invitations")
      .values({ email, role, token_hash: hash, invited_by: actor.id, expires_at: expiresAt })
      .returning("id")
      .executeTakeFirstOrThrow();
    const link = `${env().APP_URL}/invite/${token}`;
    await enqueueMail(
      trx,
      invitationMail({
        to: email,
        labName: env().LAB_NAME,
        roleLabel: roleLabels[role],
        inviterName: actor.name,
        link,
        expiresAt,
      }),
    );
    await recordPeopleChange(trx, {
      actorId: actor.id,
      subjectUserId: null,
      subjectEmail: email,
      kind: "invited",
      detail: { role, expiresAt },
    });
    return { invitationId: inv.id };
  });
}

export type InvitationState =
  | { state: "open"; email: string; role: Role; expiresAt: Date }
  | { state: "expired" | "used" | "revoked" | "unknown" };

/** Why an invitation can no longer be used (in the order the person is told), or null while it is open. */
function closedBecause(inv: {
  accepted_at: Date | null;
  revoked_at: Date | null;
  expires_at: Date;
}): "used" | "revoked" | "expired" | null {
  if (inv.accepted_at) return "used";
  if (inv.revoked_at) return "revoked";
  if (inv.expires_at.getTime() <= Date.now()) return "expired";
  return null;
}

/** What the invitation page shows for a token, without changing anything. */
export async function lookUpInvitation(token: string): Promise<InvitationState> {
  const inv = await db
    .selectFrom("invitations")
    .select(["email", "role", "expires_at", "accepted_at", "revoked_at"])
    .where("token_hash", "=", hashToken(token))
    .executeTakeFirst();
  if (!inv) return { state: "unknown" };
  const closed = closedBecause(inv);
  if (closed) return { state: closed };
  return { state: "open", email: inv.email, role: inv.role, expiresAt: inv.expires_at };
}

export const invitationProblems = {
  unknown:
    "This invitation link is not valid. Check that you copied the whole link, or ask the lab's admin for a new one.",
  used: "This invitation has already been used. Sign in with the password you chose, or reset it.",
  revoked: "This invitation was replaced by a newer one. Use the link in the most recent invitation e-mail.",
  expired: `This invitation has expired (links last ${invitationLifetimeHours} hours). Ask the lab's admin to invite you again.`,
} as const;

/** The invitee sets name and password; the account is created and the link spent, atomically. */
export async function acceptInvitation(input: {
  token: unknown;
  name: unknown;
  password: unknown;
  confirm: unknown;
}): Promise<{ userId: string; email: string }> {
  const { token, name, password } = acceptInvitationSchema.parse(input);
  const passwordHash = await hashPassword(password);
  return db.transaction().execute(async (trx) => {
    const inv = await trx
      .selectFrom("invitations")
      .select(["id", "email", "role", "expires_at", "accepted_at", "revoked_at", "invited_by"])
      .where("token_hash", "=", hashToken(token))
      .forUpdate()
      .executeTakeFirst();
    if (!inv) throw new AppError("not_found", 404, invitationProblems.unknown);
    const closed = closedBecause(inv);
    if (closed)
      throw new AppError(closed === "expired" ? "expired" : "used", 410, invitationProblems[closed]);
    const taken = await trx
      .selectFrom("users")
      .select("id")
      .where("email", "=", inv.email)
      .executeTakeFirst();
    if (taken) throw new AppError("conflict", 409, `${inv.email} already has an account. Sign in instead.`);
    const user = await trx
      .insertInto("users")
      .values({ email: inv.email, name, role: inv.role, password_hash: passwordHash })
      .returning("id")
      .executeTakeFirstOrThrow();
    await trx
      .updateTable("invitations")
      .set({ accepted_at: sql`now()`, accepted_user_id: user.id })
      .where("id", "=", inv.id)
      .execute();
    await recordPeopleChange(trx, {
      actorId: user.id,
      subjectUserId: user.id,
      subjectEmail: inv.email,
      kind: "invitation_accepted",
      detail: { role: inv.role, invitedBy: inv.invited_by },
    });
    return { userId: user.id, email: inv.email };
  });
}
