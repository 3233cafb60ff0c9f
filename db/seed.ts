import type { Kysely } from "kysely";
import { hashPassword } from "../lib/auth/password";
import { demoAccounts } from "./seed-data";
import type { Database } from "./types";

/** Seeds the invented demo lab. Idempotent: what is already there is left as it is. */
export async function seed(db: Kysely<Database>): Promise<{ usersAdded: number }> {
  let usersAdded = 0;
  for (const a of demoAccounts) {
    const exists = await db.selectFrom("users").select("id").where("email", "=", a.email).executeTakeFirst();
    if (exists) continue;
    await db
      .insertInto("users")
      .values({ email: a.email, name: a.name, role: a.role, password_hash: await hashPassword(a.password) })
      .onConflict((oc) => oc.column("email").doNothing())
      .execute();
    usersAdded++;
  }
  return { usersAdded };
}
