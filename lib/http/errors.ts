import "../validation/zod-setup";
import { ZodError } from "zod";

export type ErrorCode =
  | "unauthenticated"
  | "forbidden"
  | "not_found"
  | "invalid"
  | "conflict"
  | "expired"
  | "used"
  | "throttled"
  | "unavailable"
  | "cross_site"
  | "unsupported_media_type"
  | "internal";

/** The one error type: a code, an HTTP status, a message a person can act on, and field errors. */
export class AppError extends Error {
  constructor(
    readonly code: ErrorCode,
    readonly status: number,
    message: string,
    readonly fields?: Record<string, string[]>,
    /** Extra data for the client, e.g. the record as it now stands after a conflict. */
    readonly details?: unknown,
  ) {
    super(message);
    this.name = "AppError";
  }

  toJSON() {
    return { error: { code: this.code, message: this.message, ...(this.fields ? { fields: this.fields } : {}), ...(this.details !== undefined ? { details: this.details } : {}) } };
  }
}

/** A failed zod parse as a 422 with the field errors keyed by path ("rows.3.email"). */
export function fromZod(error: ZodError, message = "Some fields need attention."): AppError {
  const fields: Record<string, string[]> = {};
  for (const issue of error.issues) {
    const key = issue.path.length ? issue.path.join(".") : "_";
    (fields[key] ??= []).push(issue.message);
  }
  return new AppError("invalid", 422, message, fields);
}

/** PostgreSQL's answer to a NUL character in text (SQLSTATE 22021, character_not_in_repertoire). */
function isNulRefusedByDatabase(err: unknown): boolean {
  return typeof err === "object" && err !== null && (err as { code?: unknown }).code === "22021";
}

export function toAppError(err: unknown): AppError {
  if (err instanceof AppError) return err;
  if (err instanceof ZodError) return fromZod(err);
  // A backstop: inputs are checked where they come in (lib/validation/text.ts); text that
  // slipped past is still the sender's mistake, not the server's.
  if (isNulRefusedByDatabase(err)) return new AppError("invalid", 422, "Some text holds a NUL character (U+0000), which the record cannot keep: remove it.", { _: ["Text holds a NUL character."] });
  console.error("[rillbook] unexpected error:", err);
  return new AppError("internal", 500, "Something went wrong on the server. The error has been logged.");
}
