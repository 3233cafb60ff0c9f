import "server-only";
import { sql } from "kysely";
import { db } from "../../db";
import { hashPassword } from "../auth/password";
import { endSessions } from "../auth/session-version";
import { hashToken, newToken } from "../auth/tokens";
import { env } from "../env";
import { AppError } from "../http/errors";
import { enqueueMail } from "../mail/outbox";
import { passwordResetMail } from "../mail/templates";
import { resetPasswordSchema, resetRequestSchema } from "../validation/people";
import { recordPeopleChange } from "./changes";

/** Reset links are single use like invitations, and shorter lived: two hours. */
export const resetLifetimeHours = 2;

export const resetProblems = {
  unknown: "This reset link is not valid. Ask for a new one from the sign-in page.",
  used: "This reset link has already been used. Ask for a new one if you need to.",
  expired: `This reset link has expired (links last ${resetLifetimeHours} hours). Ask for a new one from the sign-in page.`,
} as const;

/**
 * Queues a reset mail when an active account has this address. The answer is the same
 * either way, so the form does not tell who has an account.
 */
export async function requestPasswordReset(input: { email: unknown }): Promise<void> {
  const { email } = resetRequestSchema.parse(input);
  await db.transaction().execute(async (trx) => {
    const user = await trx
      .selectFrom("users")
      .select(["id", "active"])
      .where("email", "=", email)
      .executeTakeFirst();
    if (!user || !user.active) return;
    const { token, hash } = newToken();
    const expiresAt = new Date(Date.now() + resetLifetimeHours * 3600_000);
    // Only the newest link works.
    await trx
      .updateTable("password_resets")
      .set({ used_at: sql`now()` })
      .where("user_id", "=", user.id)
      .where("used_at", "is", null)
      .execute();
    await trx
      .insertInto("password_resets")
      .values({ user_id: user.id, token_hash: hash, expires_at: expiresAt })
      .execute();
    await enqueueMail(
      trx,
      passwordResetMail({
        to: email,
        labName: env().LAB_NAME,
        link: `${env().APP_URL}/reset/${token}`,
        expiresAt,
      }),
    );
    await recordPeopleChange(trx, {
      actorId: null,
      subjectUserId: user.id,
      subjectEmail: email,
      kind: "password_reset_requested",
    });
  });
}

/** Why a reset link can no longer be used, or null while it is open. */
function closedBecause(row: { used_at: Date | null; expires_at: Date }): "used" | "expired" | null {
  if (row.used_at) return "used";
  if (row.expires_at.getTime() <= Date.now()) return "expired";
  return null;
}

export async function lookUpReset(token: string): Promise<"open" | keyof typeof resetProblems> {
  const row = await db
    .selectFrom("password_resets")
    .select(["expires_at", "used_at"])
    .where("token_hash", "=", hashToken(token))
    .executeTakeFirst();
  if (!row) return "unknown";
  return closedBecause(row) ?? "open";
}

export async function resetPassword(input: {
  token: unknown;
  password: unknown;
  confirm: unknown;
}): Promise<{ email: string }> {
  const { token, password } = resetPasswordSchema.parse(input);
  const passwordHash = await hashPassword(password);
  return db.transaction().execute(async (trx) => {
    const row = await trx
      .selectFrom("password_resets")
      .innerJoin("users", "users.id", "password_resets.user_id")
      .select([
        "password_resets.id",
        "password_resets.expires_at",
        "password_resets.used_at",
        "users.id as userId",
        "users.email",
        "users.active",
      ])
      .where("password_resets.token_hash", "=", hashToken(token))
      .forUpdate()
      .executeTakeFirst();
    if (!row) throw new AppError("not_found", 404, resetProblems.unknown);
    const closed = closedBecause(row);
    if (closed) throw new AppError(closed, 410, resetProblems[closed]);
    if (!row.active)
      throw new AppError("forbidden", 403, "This account has been deactivated. Ask the lab's admin.");
    await trx
      .updateTable("password_resets")
      .set({ used_at: sql`now()` })
      .where("id", "=", row.id)
      .execute();
    await trx
      .updateTable("users")
      .set({ password_hash: passwordHash, updated_at: sql`now()` })
      .where("id", "=", row.userId)
      .execute();
    // Whoever knew the old password may hold a session: every session of the account ends.
    await endSessions(trx, row.userId);
    await recordPeopleChange(trx, {
      actorId: row.userId,
      subjectUserId: row.userId,
      subjectEmail: row.email,
      kind: "password_reset",
    });
    return { email: row.email };
  });
}
