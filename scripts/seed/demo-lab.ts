import { type Kysely, sql } from "kysely";
import type { Database } from "../../db/types";
import { hashPassword } from "../../lib/auth/password";
import { demoAccounts } from "./demo-accounts";
import { seedCatalogue } from "./demo-catalogue";
import { seedEquipment } from "./demo-equipment";
import { seedPresets } from "./demo-presets";

/**
 * Seeds the invented demo lab. Idempotent: what is already there is left as it is. Runs
 * at every start, so it asks once what is there rather than once per person and preset.
 */
export async function seed(
  db: Kysely<Database>,
): Promise<{ usersAdded: number; presetsAdded: number; discsAdded: number }> {
  const emails = demoAccounts.map((a) => a.email);
  const userIds = new Map(
    (await db.selectFrom("users").select(["id", "email"]).where("email", "in", emails).execute()).map((u) => [
      u.email,
      u.id,
    ]),
  );
  let usersAdded = 0;
  for (const a of demoAccounts) {
    if (userIds.has(a.email)) continue;
    const added = await db
      .insertInto("users")
      .values({ email: a.email, name: a.name, role: a.role, password_hash: await hashPassword(a.password) })
      .onConflict((oc) => oc.column("email").doNothing())
      .returning("id")
      .executeTakeFirst();
    // Added meanwhile by another run: the conflict left that row in place.
    userIds.set(
      a.email,
      added?.id ??
        (await db.selectFrom("users").select("id").where("email", "=", a.email).executeTakeFirstOrThrow()).id,
    );
    usersAdded++;
  }

  const presetNames = new Set(
    (
      await db
        .selectFrom("curve_presets")
        .select(sql<string>`lower(name)`.as("name"))
        .execute()
    ).map((p) => p.name),
  );
  const newPresets = seedPresets().filter((p) => !presetNames.has(p.name.toLowerCase()));
  if (newPresets.length) {
    await db.transaction().execute(async (trx) => {
      for (const p of newPresets) {
        const preset = await trx
          .insertInto("curve_presets")
          .values({ name: p.name, current_version: 1 })
          .returning("id")
          .executeTakeFirstOrThrow();
        await trx
          .insertInto("curve_preset_versions")
          .values({
            preset_id: preset.id,
            version: 1,
            name: p.name,
            spec: JSON.stringify(p.spec),
            notes: p.notes,
            change_note: "Seeded into the starting library.",
            created_by: null,
          })
          .execute();
      }
    });
  }

  const idOf = (role: (typeof demoAccounts)[number]["role"]) =>
    userIds.get(demoAccounts.find((a) => a.role === role)!.email) ?? null;
  const { discsAdded } = await seedCatalogue(db, idOf("archivist"), idOf("engineer"));
  await seedEquipment(db, idOf("engineer"));
  return { usersAdded, presetsAdded: newPresets.length, discsAdded };
}
