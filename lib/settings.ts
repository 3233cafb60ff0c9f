import "server-only";
import { z } from "zod";
import { db } from "../db";
import type { SessionUser } from "./auth/session-user";
import { appendEvent } from "./provenance";
import { cleanString } from "./validation/text";
import { accessCopyBitDepthSchema, accessCopyRateSchema } from "./validation/transfers";

const contactText = (max: number) =>
  cleanString()
    .transform((v) => v.trim())
    .pipe(z.string().max(max, `At most ${max} characters.`));

export const settingsSchema = z
  .object({
    fixityCycleDays: z.coerce
      .number()
      .int("Whole days, please.")
      .min(1, "At least one day.")
      .max(3650, "At most ten years."),
    accessCopyRateHz: accessCopyRateSchema,
    accessCopyBitDepth: accessCopyBitDepthSchema,
    // The lab's contact, written into every bag's bag-info.txt (RFC 8493 §2.2.2).
    contactName: contactText(200),
    contactEmail: z.union([
      z.literal(""),
      z.email("Type an e-mail address, for example archive@lab.example."),
    ]),
    contactPhone: contactText(60),
    contactAddress: contactText(500),
  })
  .partial();

export interface LabSettings {
  fixityCycleDays: number;
  accessCopyRateHz: "transfer" | number;
  accessCopyBitDepth: 16 | 24;
  /** The lab's contact for repositories ("" when not set). */
  contactName: string;
  contactEmail: string;
  contactPhone: string;
  contactAddress: string;
}

const keys = {
  fixityCycleDays: "fixity_cycle_days",
  accessCopyRateHz: "access_copy_rate_hz",
  accessCopyBitDepth: "access_copy_bit_depth",
  contactName: "contact_name",
  contactEmail: "contact_email",
  contactPhone: "contact_phone",
  contactAddress: "contact_address",
} as const;

const text = (v: unknown) => (typeof v === "string" ? v : "");

export async function getSettings(): Promise<LabSettings> {
  const rows = await db.selectFrom("lab_settings").select(["key", "value"]).execute();
  const v = new Map(rows.map((r) => [r.key, r.value]));
  const rate = v.get(keys.accessCopyRateHz);
  return {
    fixityCycleDays: Number(v.get(keys.fixityCycleDays) ?? 30),
    accessCopyRateHz: typeof rate === "number" ? rate : "transfer",
    accessCopyBitDepth: v.get(keys.accessCopyBitDepth) === 16 ? 16 : 24,
    contactName: text(v.get(keys.contactName)),
    contactEmail: text(v.get(keys.contactEmail)),
    contactPhone: text(v.get(keys.contactPhone)),
    contactAddress: text(v.get(keys.contactAddress)),
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
