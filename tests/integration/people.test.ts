// Invitations, password resets, throttling and deactivation against the real test
// database (and, for deactivation, the running app).
import { sql } from "kysely";
import { afterAll, describe, expect, it } from "vitest";
import { hashPassword } from "@/lib/auth/password";
import { checkCredentials } from "@/lib/auth/sign-in";
import { signInMessages, throttle } from "@/lib/auth/sign-in-policy";
import { hashToken } from "@/lib/auth/tokens";
import { db } from "@/db";
import { setActive } from "@/lib/people/accounts";
import { acceptInvitation, invitePerson, lookUpInvitation } from "@/lib/people/invitations";
import { requestPasswordReset, resetPassword } from "@/lib/people/password-resets";
import { api, linkIn, signInCookie, uniqueEmail } from "../support/app";
import { ownerDb, testDb } from "../support/db";

afterAll(async () => {
  await db.destroy();
  await testDb.destroy();
  await ownerDb.destroy();
});

async function admin() {
  const row = await testDb
    .selectFrom("users")
    .select(["id", "email", "name", "role"])
    .where("role", "=", "admin")
    .where("active", "=", true)
    .orderBy("created_at")
    .executeTakeFirstOrThrow();
  return row;
}

async function counts(email: string) {
  const [inv, mail, users] = await Promise.all([
    testDb
      .selectFrom("invitations")
      .select(sql<number>`count(*)::int`.as("n"))
      .where("email", "=", email)
      .executeTakeFirstOrThrow(),
    testDb
      .selectFrom("outbox")
      .select(sql<number>`count(*)::int`.as("n"))
      .where("to_address", "=", email)
      .executeTakeFirstOrThrow(),
    testDb
      .selectFrom("users")
      .select(sql<number>`count(*)::int`.as("n"))
      .where("email", "=", email)
      .executeTakeFirstOrThrow(),
  ]);
  return { invitations: inv.n, mail: mail.n, users: users.n };
}

/** The token is only ever in the mail: read it back from the outbox row. */
async function tokenFromOutbox(email: string, prefix: string): Promise<string> {
  const msg = await testDb
    .selectFrom("outbox")
    .select("body_text")
    .where("to_address", "=", email)
    .orderBy("created_at", "desc")
    .executeTakeFirstOrThrow();
  return linkIn(msg.body_text, prefix).split(prefix)[1];
}

async function makeUser(
  role: "archivist" | "engineer" | "curator" | "admin",
  password = "a good long passphrase",
) {
  const email = uniqueEmail(role);
  const row = await testDb
    .insertInto("users")
    .values({ email, name: `Test ${role}`, role, password_hash: await hashPassword(password) })
    .returning("id")
    .executeTakeFirstOrThrow();
  return { id: row.id, email, password };
}

describe("invitations", () => {
  it("writes the invitation, its mail and the change together, and stores only the token's hash", async () => {
    const email = uniqueEmail("invitee");
    await invitePerson(await admin(), { email, role: "curator" });
    expect(await counts(email)).toEqual({ invitations: 1, mail: 1, users: 0 });
    const token = await tokenFromOutbox(email, "/invite/");
    const stored = await testDb
      .selectFrom("invitations")
      .select(["token_hash", "expires_at"])
      .where("email", "=", email)
      .executeTakeFirstOrThrow();
    expect(stored.token_hash).toBe(hashToken(token));
    expect(stored.token_hash).not.toContain(token);
    const hours = (stored.expires_at.getTime() - Date.now()) / 3600_000;
    expect(hours).toBeGreaterThan(71.9);
    expect(hours).toBeLessThanOrEqual(72);
    const change = await testDb
      .selectFrom("provenance_events")
      .select(["kind", "actor_id"])
      .where("subject_id", "=", email)
      .executeTakeFirstOrThrow();
    expect(change.kind).toBe("person.invited");
  });

  it("is accepted once: the second use is refused and creates nothing", async () => {
    const email = uniqueEmail("once");
    await invitePerson(await admin(), { email, role: "engineer" });
    const token = await tokenFromOutbox(email, "/invite/");
    expect((await lookUpInvitation(token)).state).toBe("open");
    const { userId } = await acceptInvitation({
      token,
      name: "Rosa Quill",
      password: "turnover and rolloff",
      confirm: "turnover and rolloff",
    });
    const user = await testDb
      .selectFrom("users")
      .select(["role", "name"])
      .where("id", "=", userId)
      .executeTakeFirstOrThrow();
    expect(user).toEqual({ role: "engineer", name: "Rosa Quill" });
    await expect(
      acceptInvitation({
        token,
        name: "Someone Else",
        password: "another long passphrase",
        confirm: "another long passphrase",
      }),
    ).rejects.toThrow(/already been used/);
    expect((await counts(email)).users).toBe(1);
    expect((await lookUpInvitation(token)).state).toBe("used");
  });

  it("refuses an expired link and leaves the invitation unspent", async () => {
    const email = uniqueEmail("late");
    await invitePerson(await admin(), { email, role: "archivist" });
    const token = await tokenFromOutbox(email, "/invite/");
    await testDb
      .updateTable("invitations")
      .set({ expires_at: sql`now() - interval '1 minute'` })
      .where("email", "=", email)
      .execute();
    await expect(
      acceptInvitation({
        token,
        name: "Late Person",
        password: "a good long passphrase",
        confirm: "a good long passphrase",
      }),
    ).rejects.toThrow(/expired/);
    expect((await counts(email)).users).toBe(0);
    const inv = await testDb
      .selectFrom("invitations")
      .select("accepted_at")
      .where("email", "=", email)
      .executeTakeFirstOrThrow();
    expect(inv.accepted_at).toBeNull();
  });

  it("refuses an unknown token, a short password and an unknown role, writing nothing", async () => {
    await expect(
      acceptInvitation({
        token: "y".repeat(43),
        name: "Nobody",
        password: "a good long passphrase",
        confirm: "a good long passphrase",
      }),
    ).rejects.toThrow(/not valid/);
    const email = uniqueEmail("weak");
    await invitePerson(await admin(), { email, role: "archivist" });
    const token = await tokenFromOutbox(email, "/invite/");
    await expect(
      acceptInvitation({ token, name: "Weak", password: "short", confirm: "short" }),
    ).rejects.toThrow();
    expect((await lookUpInvitation(token)).state).toBe("open");
    const before = await counts("odd-role@test.example");
    await expect(
      invitePerson(await admin(), { email: "odd-role@test.example", role: "owner" }),
    ).rejects.toThrow();
    await expect(invitePerson(await admin(), { email: "not-an-address", role: "curator" })).rejects.toThrow();
    expect(await counts("odd-role@test.example")).toEqual(before);
    expect((await counts("not-an-address")).invitations).toBe(0);
  });

  it("refuses to invite an address that already has an account", async () => {
    const existing = await makeUser("curator");
    await expect(invitePerson(await admin(), { email: existing.email, role: "curator" })).rejects.toThrow(
      /already has an account/,
    );
    expect((await counts(existing.email)).invitations).toBe(0);
  });
});

describe("password reset", () => {
  it("works once, changes the password and answers the same for unknown addresses", async () => {
    const u = await makeUser("archivist");
    await requestPasswordReset({ email: uniqueEmail("nobody") }); // no error, no mail
    await requestPasswordReset({ email: u.email });
    const token = await tokenFromOutbox(u.email, "/reset/");
    await resetPassword({ token, password: "a brand new passphrase", confirm: "a brand new passphrase" });
    await expect(checkCredentials({ email: u.email, password: u.password }, null)).rejects.toThrow(
      signInMessages.wrong,
    );
    expect((await checkCredentials({ email: u.email, password: "a brand new passphrase" }, null)).id).toBe(
      u.id,
    );
    await expect(
      resetPassword({ token, password: "yet another passphrase", confirm: "yet another passphrase" }),
    ).rejects.toThrow(/already been used/);
  });

  it("refuses an expired reset link and keeps the old password", async () => {
    const u = await makeUser("curator");
    await requestPasswordReset({ email: u.email });
    const token = await tokenFromOutbox(u.email, "/reset/");
    await testDb
      .updateTable("password_resets")
      .set({ expires_at: sql`now() - interval '1 second'` })
      .where("user_id", "=", u.id)
      .execute();
    await expect(
      resetPassword({ token, password: "a brand new passphrase", confirm: "a brand new passphrase" }),
    ).rejects.toThrow(/expired/);
    expect((await checkCredentials({ email: u.email, password: u.password }, null)).id).toBe(u.id);
  });
});

describe("sign-in throttling", () => {
  it("records each failure and refuses the address, even with the right password, after repeated failures", async () => {
    const u = await makeUser("engineer");
    for (let i = 0; i < throttle.lockAfter; i++) {
      await expect(
        checkCredentials({ email: u.email, password: "wrong password here" }, "127.0.0.1"),
      ).rejects.toThrow();
    }
    const failures = await testDb
      .selectFrom("sign_in_attempts")
      .select(["succeeded", "reason", "ip"])
      .where("email", "=", u.email)
      .execute();
    expect(failures).toHaveLength(throttle.lockAfter);
    expect(failures.every((f) => !f.succeeded && f.reason === "wrong-password" && f.ip === "127.0.0.1")).toBe(
      true,
    );
    await expect(checkCredentials({ email: u.email, password: u.password }, null)).rejects.toThrow(
      signInMessages.locked,
    );
    // Once the failures are older than the window, the right password works again.
    // The attempts are an append-only record for the app: only the owner can age them.
    await ownerDb
      .updateTable("sign_in_attempts")
      .set({ at: sql`now() - make_interval(mins => ${throttle.windowMinutes + 1})` })
      .where("email", "=", u.email)
      .execute();
    expect((await checkCredentials({ email: u.email, password: u.password }, null)).id).toBe(u.id);
  }, 60_000);
});

describe("deactivation", () => {
  it("ends access at the person's next request", async () => {
    const u = await makeUser("curator");
    const cookie = await signInCookie(u.email, u.password);
    expect((await api("/api/me", { cookie })).status).toBe(200);
    await setActive(await admin(), { userId: u.id, active: "false" });
    const after = await api("/api/me", { cookie });
    expect(after.status).toBe(401);
    await expect(checkCredentials({ email: u.email, password: u.password }, null)).rejects.toThrow(
      signInMessages.inactive,
    );
    const change = await testDb
      .selectFrom("provenance_events")
      .select(["kind"])
      .where("subject_id", "=", u.id)
      .executeTakeFirstOrThrow();
    expect(change.kind).toBe("person.deactivated");
  });

  it("will not deactivate the acting admin or leave the lab without an admin", async () => {
    const a = await admin();
    await expect(setActive(a, { userId: a.id, active: "false" })).rejects.toThrow(/your own account/);
  });
});
