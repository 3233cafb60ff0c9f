import { toAppError } from "./errors";

/** What a server action hands back to its form: a message and the field errors to show beside fields. */
export type ActionState = { ok: boolean; message?: string; fields?: Record<string, string[]> } | null;

export async function runAction(fn: () => Promise<string | void>): Promise<ActionState> {
  try {
    const message = await fn();
    return { ok: true, message: message ?? undefined };
  } catch (err) {
    const e = toAppError(err);
    return { ok: false, message: e.message, fields: e.fields };
  }
}

export function formValues(form: FormData): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, v] of form.entries()) if (typeof v === "string") out[k] = v;
  return out;
}
