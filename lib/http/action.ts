import { toAppError } from "./errors";

/** What a server action hands back to its form: a message and the field errors to show beside fields. */
export type ActionState = {
  ok: boolean;
  message?: string;
  fields?: Record<string, string[]>;
  values?: Record<string, string>;
} | null;

/**
 * Runs a server action's work and turns errors into a state for the form. `keep` holds
 * the non-secret values to put back into the fields after a refusal (React resets a
 * form after its action runs).
 */
export async function runAction(
  fn: () => Promise<string | void>,
  keep?: Record<string, string>,
): Promise<ActionState> {
  try {
    const message = await fn();
    return { ok: true, message: message ?? undefined };
  } catch (err) {
    const e = toAppError(err);
    return { ok: false, message: e.message, fields: e.fields, values: keep };
  }
}

export function formValues(form: FormData): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, v] of form.entries()) if (typeof v === "string") out[k] = v;
  return out;
}
