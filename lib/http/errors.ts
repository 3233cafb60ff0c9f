import "../validation/zod-setup";
import { ZodError } from "zod";

export type ErrorCode =
  | "unauthenticated"
  | "forbidden"
  | "not_found"
  | "invalid"
  | "conflict"
  /** A flat transfer identical (SHA-256) to one stored for another side: accepted only once the engineer confirms. */
  | "duplicate_file"
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
    return {
      error: {
        code: this.code,
        message: this.message,
        ...(this.fields ? { fields: this.fields } : {}),
        ...(this.details !== undefined ? { details: this.details } : {}),
      },
    };
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

/** What node-postgres and PostgreSQL say when the server went away or is not there yet. */
const lostConnectionMessage = new RegExp(
  [
    "Connection terminated",
    "terminating connection due to administrator command",
    "the database system is (starting up|shutting down)",
    "Client has encountered a connection error",
  ].join("|"),
  "i",
);

/**
 * True for a failure to reach PostgreSQL, not a failed statement: the server refused or
 * dropped the connection (stopped, restarting), or it is starting up or shutting down
 * (SQLSTATE class 08, and 57P01–57P03). A request that meets one changed nothing: its
 * transaction never committed.
 */
export function isDatabaseUnavailable(err: unknown): boolean {
  if (typeof err !== "object" || err === null) return false;
  const e = err as { code?: unknown; message?: unknown; errors?: unknown };
  const code = typeof e.code === "string" ? e.code : "";
  if (
    ["ECONNREFUSED", "ECONNRESET", "EPIPE", "ETIMEDOUT", "57P01", "57P02", "57P03"].includes(code) ||
    code.startsWith("08")
  )
    return true;
  const message = typeof e.message === "string" ? e.message : "";
  if (lostConnectionMessage.test(message)) return true;
  // Node reports a refused connection to every address of a host as an AggregateError.
  return Array.isArray(e.errors) && e.errors.some(isDatabaseUnavailable);
}

export const databaseUnavailableMessage =
  "The lab's database is unavailable just now, so nothing was read or changed. Try again in a minute; if it lasts, tell the lab's admin.";

export function toAppError(err: unknown): AppError {
  if (err instanceof AppError) return err;
  if (err instanceof ZodError) return fromZod(err);
  if (isDatabaseUnavailable(err)) {
    console.error("[rillbook] the database is unavailable:", err instanceof Error ? err.message : err);
    return new AppError("unavailable", 503, databaseUnavailableMessage);
  }
  // A backstop: inputs are checked where they come in (lib/validation/text.ts); text that
  // slipped past is still the sender's mistake, not the server's.
  if (isNulRefusedByDatabase(err))
    return new AppError(
      "invalid",
      422,
      "Some text holds a NUL character (U+0000), which the record cannot keep: remove it.",
      { _: ["Text holds a NUL character."] },
    );
  console.error("[rillbook] unexpected error:", err);
  return new AppError("internal", 500, "Something went wrong on the server. The error has been logged.");
}
