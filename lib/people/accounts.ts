import "server-only";
import { sql, type Transaction } from "kysely";
import { db } from "../../db";
import type { Database } from "../../db/types";
import type { SessionUser } from "../auth/session-user";
import { endSessions } from "../auth/session-version";
import { AppError } from "../http/errors";
import { changeRoleSchema, setActiveSchema } from "../validation/people";
import { recordPeopleChange } from "./changes";

async function activeAdminCount(trx: Transaction<Database>): Promise<number> {
  const row = await trx
    .selectFrom("users")
    .select(sql<number>`count(*)::int`.as("n"))
    .where("role", "=", "admin")
    .where("active", "=", true)
    .executeTakeFirstOrThrow();
  return row.n;
}

/**
 * Locks the users table for the rest of the transaction, so that two admins cannot demote
 * or deactivate each other at once, and reads the person to change.
 */
async function lockPerson(trx: Transaction<Database>, userId: string) {
  await sql`LOCK TABLE users IN SHARE ROW EXCLUSIVE MODE`.execute(trx);
  const user = await trx
    .selectFrom("users")
    .select(["id", "email", "role", "active"])
    .where("id", "=", userId)
    .executeTakeFirst();
  if (!user) throw new AppError("not_found", 404, "No such person.");
  return user;
}

export async function changeRole(
  actor: SessionUser,
  input: { userId: unknown; role: unknown },
): Promise<void> {
  const { userId, role } = changeRoleSchema.parse(input);
  await db.transaction().execute(async (trx) => {
    const user = await lockPerson(trx, userId);
    if (user.role === role) return;
    if (user.role === "admin" && user.active && (await activeAdminCount(trx)) <= 1) {
      throw new AppError(
        "conflict",
        409,
        "This is the lab's only active admin: make someone else admin first.",
      );
    }
    await trx
      .updateTable("users")
      .set({ role, updated_at: sql`now()` })
      .where("id", "=", userId)
      .execute();
    // The person signs in again under the new role: no session keeps the old one's pages open.
    await endSessions(trx, userId);
    await recordPeopleChange(trx, {
      actorId: actor.id,
      subjectUserId: userId,
      subjectEmail: user.email,
      kind: "role_changed",
      detail: { from: user.role, to: role },
    });
  });
}

/**
 * Deactivation takes effect at the person's next request: every check reads `active` afresh,
 * and the person's sessions end, so a reactivation does not bring an old cookie back to life.
 */
export async function setActive(
  actor: SessionUser,
  input: { userId: unknown; active: unknown },
): Promise<void> {
  const { userId, active } = setActiveSchema.parse(input);
  await db.transaction().execute(async (trx) => {
    const user = await lockPerson(trx, userId);
    if (user.active === active) return;
    if (!active && userId === actor.id)
      throw new AppError("conflict", 409, "You cannot deactivate your own account.");
    if (!active && user.role === "admin" && (await activeAdminCount(trx)) <= 1) {
      throw new AppError(
        "conflict",
        409,
        "This is the lab's only active admin: make someone else admin first.",
      );
    }
    await trx
      .updateTable("users")
      .set({ active, updated_at: sql`now()` })
      .where("id", "=", userId)
      .execute();
    await endSessions(trx, userId);
    await recordPeopleChange(trx, {
      actorId: actor.id,
      subjectUserId: userId,
      subjectEmail: user.email,
      kind: active ? "reactivated" : "deactivated",
    });
  });
}

export interface PersonRow {
  id: string;
  email: string;
  name: string;
  role: SessionUser["role"];
  active: boolean;
  createdAt: Date;
  lastSignInAt: Date | null;
}

export async function listPeople(): Promise<PersonRow[]> {
  return db
    .selectFrom("users")
    .select((eb) => [
      "users.id",
      "users.email",
      "users.name",
      "users.role",
      "users.active",
      "users.created_at as createdAt",
      eb
        .selectFrom("sign_in_attempts")
        .select(sql<Date>`max(at)`.as("at"))
        .whereRef("sign_in_attempts.email", "=", "users.email")
        .where("succeeded", "=", true)
        .as("lastSignInAt"),
    ])
    .orderBy("users.name")
    .execute();
}

export async function listOpenInvitations() {
  return db
    .selectFrom("invitations")
    .select(["id", "email", "role", "expires_at as expiresAt", "created_at as createdAt"])
    .where("accepted_at", "is", null)
    .where("revoked_at", "is", null)
    .where("expires_at", ">", sql<Date>`now()`)
    .orderBy("created_at", "desc")
    .execute();
}

export async function listPeopleChanges(limit = 100) {
  const rows = await db
    .selectFrom("provenance_events as e")
    .leftJoin("users as actor", "actor.id", "e.actor_id")
    .select(["e.id", "e.kind", "e.payload", "e.at", "actor.name as actorName"])
    .where("e.subject_type", "=", "person")
    .orderBy("e.seq", "desc")
    .limit(limit)
    .execute();
  return rows.map((r) => {
    const { email, ...detail } = r.payload as { email: string } & Record<string, unknown>;
    return {
      id: r.id,
      kind: r.kind.replace(/^person\./, ""),
      subjectEmail: email,
      detail,
      at: r.at,
      actorName: r.actorName,
    };
  });
}
