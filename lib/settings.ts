import "server-only";
import { z } from "zod";
import { db } from "../db";
import type { SessionUser } from "./auth/session-user";
import { appendEvent } from "./provenance";
import { accessCopyBitDepthSchema, accessCopyRateSchema } from "./validation/transfers";

export const settingsSchema = z
  .object({
    fixityCycleDays: z.coerce
      .number()
      .int("Whole days, please.")
      .min(1, "At least one day.")
      .max(3650, "At most ten years."),
    accessCopyRateHz: accessCopyRateSchema,
    accessCopyBitDepth: accessCopyBitDepthSchema,
  })
  .partial();

export interface LabSettings {
  fixityCycleDays: number;
  accessCopyRateHz: "transfer" | number;
  accessCopyBitDepth: 16 | 24;
}

const keys = {
  fixityCycleDays: "fixity_cycle_days",
  accessCopyRateHz: "access_copy_rate_hz",
  accessCopyBitDepth: "access_copy_bit_depth",
} as const;

export async function getSettings(): Promise<LabSettings> {
  const rows = await db.selectFrom("lab_settings").select(["key", "value"]).execute();
  const v = new Map(rows.map((r) => [r.key, r.value]));
  const rate = v.get(keys.accessCopyRateHz);
  return {
    fixityCycleDays: Number(v.get(keys.fixityCycleDays) ?? 30),
    accessCopyRateHz: typeof rate === "number" ? rate : "transfer",
    accessCopyBitDepth: v.get(keys.accessCopyBitDepth) === 16 ? 16 : 24,
  };
}

/** The admin changes the lab's settings (any of them); the change is an event. */
export async function updateSettings(actor: SessionUser, input: unknown): Promise<LabSettings> {
  const s = settingsSchema.parse(input);
  const before = await getSettings();
  const changed = (Object.keys(s) as (keyof typeof keys)[]).filter((k) => s[k] !== undefined);
  await db.transaction().execute(async (trx) => {
    for (const k of changed) {
      const value = JSON.stringify(s[k]);
      await trx
        .insertInto("lab_settings")
        .values({ key: keys[k], value, updated_by: actor.id })
        .onConflict((oc) =>
          oc.column("key").doUpdateSet({ value, updated_by: actor.id, updated_at: new Date() }),
        )
        .execute();
    }
    if (changed.length) {
      await appendEvent(trx, {
        actorId: actor.id,
        kind: "lab.settings_changed",
        subjectType: "lab",
        subjectId: changed.map((k) => keys[k]).join(","),
        payload: {
          before: Object.fromEntries(changed.map((k) => [k, before[k]])),
          after: Object.fromEntries(changed.map((k) => [k, s[k]])),
        },
      });
    }
  });
  return getSettings();
}
