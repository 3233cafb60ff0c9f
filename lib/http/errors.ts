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

export function toAppError(err: unknown): AppError {
  if (err instanceof AppError) return err;
  if (err instanceof ZodError) return fromZod(err);
  console.error("[rillbook] unexpected error:", err);
  return new AppError("internal", 500, "Something went wrong on the server. The error has been logged.");
}
