import "server-only";
import { z } from "zod";
import { db } from "../db";
import type { SessionUser } from "./auth/session-user";
import { appendEvent } from "./provenance";

export const settingsSchema = z.object({
  fixityCycleDays: z.coerce.number().int("Whole days, please.").min(1, "At least one day.").max(3650, "At most ten years."),
});

export async function getSettings() {
  const row = await db.selectFrom("lab_settings").select("value").where("key", "=", "fixity_cycle_days").executeTakeFirst();
  return { fixityCycleDays: Number(row?.value ?? 30) };
}

/** The admin sets the fixity cycle; the change is an event. */
export async function updateSettings(actor: SessionUser, input: unknown) {
  const s = settingsSchema.parse(input);
  const before = await getSettings();
  await db.transaction().execute(async (trx) => {
    await trx
      .insertInto("lab_settings")
      .values({ key: "fixity_cycle_days", value: JSON.stringify(s.fixityCycleDays), updated_by: actor.id })
      .onConflict((oc) => oc.column("key").doUpdateSet({ value: JSON.stringify(s.fixityCycleDays), updated_by: actor.id, updated_at: new Date() }))
      .execute();
    await appendEvent(trx, { actorId: actor.id, kind: "lab.settings_changed", subjectType: "lab", subjectId: "fixity_cycle_days", payload: { before, after: s } });
  });
  return s;
}
