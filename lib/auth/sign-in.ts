import "server-only";
import { sql } from "kysely";
import { db } from "../../db";
import { verifyAgainstDecoy, verifyPassword } from "./password";
import type { SessionUser } from "./session-user";
import { signInSchema } from "../validation/people";
import { signInMessages, throttle, throttleDelayMs } from "./sign-in-policy";

export class SignInRefused extends Error {}

async function recentFailures(email: string): Promise<number> {
  const row = await db
    .selectFrom("sign_in_attempts")
    .select(sql<number>`count(*)::int`.as("n"))
    .where("email", "=", email)
    .where("succeeded", "=", false)
    .where("reason", "!=", "locked")
    .where("at", ">", sql<Date>`now() - make_interval(mins => ${throttle.windowMinutes})`)
    .where((eb) =>
      eb(
        "at",
        ">",
        eb
          .selectFrom("sign_in_attempts as s")
          .select(sql<Date>`coalesce(max(s.at), '-infinity'::timestamptz)`.as("last"))
          .where("s.email", "=", email)
          .where("s.succeeded", "=", true),
      ),
    )
    .executeTakeFirstOrThrow();
  return row.n;
}

async function record(
  email: string,
  succeeded: boolean,
  reason: string | null,
  ip: string | null,
): Promise<void> {
  await db.insertInto("sign_in_attempts").values({ email, succeeded, reason, ip }).execute();
}

/** Checks an e-mail and password; returns the person, or throws SignInRefused with a message to show. */
export async function checkCredentials(
  input: { email: unknown; password: unknown },
  ip: string | null,
): Promise<SessionUser & { sessionVersion: number }> {
  const parsed = signInSchema.safeParse(input);
  if (!parsed.success) throw new SignInRefused(parsed.error.issues[0]?.message ?? signInMessages.wrong);
  const { email, password } = parsed.data;

  const failures = await recentFailures(email);
  if (failures >= throttle.lockAfter) {
    await record(email, false, "locked", ip);
    throw new SignInRefused(signInMessages.locked);
  }
  const delay = throttleDelayMs(failures);
  if (delay) await new Promise((r) => setTimeout(r, delay));

  const user = await db
    .selectFrom("users")
    .select(["id", "email", "name", "role", "active", "password_hash", "session_version"])
    .where("email", "=", email)
    .executeTakeFirst();
  const ok = user ? await verifyPassword(password, user.password_hash) : await verifyAgainstDecoy(password);
  if (!user || !ok) {
    await record(email, false, user ? "wrong-password" : "unknown-address", ip);
    throw new SignInRefused(
      failures + 1 >= throttle.lockAfter ? signInMessages.locked : signInMessages.wrong,
    );
  }
  if (!user.active) {
    await record(email, false, "inactive", ip);
    throw new SignInRefused(signInMessages.inactive);
  }
  await record(email, true, null, ip);
  return {
    id: user.id,
    email: user.email,
    name: user.name,
    role: user.role,
    sessionVersion: user.session_version,
  };
}
