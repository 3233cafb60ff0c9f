"use server";
import { revalidatePath } from "next/cache";
import type { CurveSpec } from "@/lib/curves";
import { requirePermission } from "@/lib/auth/session";
import { toAppError } from "@/lib/http/errors";
import { createPreset, updatePreset } from "@/lib/presets";

export type SavePresetResult =
  | { ok: true; presetId: string; version: number; message: string }
  | { ok: false; message: string; fields?: Record<string, string[]> };

/**
 * Saves the workbench's curve: as a new preset (no presetId) or as a new version of an
 * existing one. A change note is required either way.
 */
export async function savePresetAction(input: {
  presetId?: string;
  name: string;
  spec: CurveSpec;
  notes: string;
  changeNote: string;
}): Promise<SavePresetResult> {
  try {
    const actor = await requirePermission("curves:edit");
    const saved = input.presetId
      ? await updatePreset(actor, input.presetId, {
          name: input.name,
          spec: input.spec,
          notes: input.notes,
          changeNote: input.changeNote,
        })
      : await createPreset(actor, {
          name: input.name,
          spec: input.spec,
          notes: input.notes,
          changeNote: input.changeNote,
        });
    revalidatePath("/curves");
    return {
      ok: true,
      presetId: saved.id,
      version: saved.currentVersion,
      message: `Saved "${saved.name}" as version ${saved.currentVersion}.`,
    };
  } catch (err) {
    const e = toAppError(err);
    return { ok: false, message: e.message, fields: e.fields };
  }
}
