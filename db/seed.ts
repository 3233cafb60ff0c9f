import { type Kysely, sql } from "kysely";
import { hashPassword } from "../lib/auth/password";
import { demoAccounts } from "./seed-data";
import { seedCatalogue } from "./seed-catalogue";
import { seedPresets } from "./seed-presets";
import type { Database } from "./types";

/** Seeds the invented demo lab. Idempotent: what is already there is left as it is. */
export async function seed(db: Kysely<Database>): Promise<{ usersAdded: number; presetsAdded: number; discsAdded: number }> {
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
  let presetsAdded = 0;
  for (const p of seedPresets()) {
    await db.transaction().execute(async (trx) => {
      const exists = await trx.selectFrom("curve_presets").select("id").where(sql`lower(name)`, "=", p.name.toLowerCase()).executeTakeFirst();
      if (exists) return;
      const preset = await trx.insertInto("curve_presets").values({ name: p.name, current_version: 1 }).returning("id").executeTakeFirstOrThrow();
      await trx
        .insertInto("curve_preset_versions")
        .values({ preset_id: preset.id, version: 1, name: p.name, spec: JSON.stringify(p.spec), notes: p.notes, change_note: "Seeded into the starting library.", created_by: null })
        .execute();
      presetsAdded++;
    });
  }
  const archivist = await db.selectFrom("users").select("id").where("email", "=", demoAccounts.find((a) => a.role === "archivist")!.email).executeTakeFirst();
  const engineer = await db.selectFrom("users").select("id").where("email", "=", demoAccounts.find((a) => a.role === "engineer")!.email).executeTakeFirst();
  const { discsAdded } = await seedCatalogue(db, archivist?.id ?? null, engineer?.id ?? null);
  return { usersAdded, presetsAdded, discsAdded };
}
