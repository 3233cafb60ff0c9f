// What went wrong when the lab's file store (the bucket) was asked for something: the
// one place that tells "cannot reach the store" (network errors, timeouts, 5xx, throttling)
// from "the object is not there" (404, NoSuchKey) and from a refusal (403 and other 4xx).
// A fixity check must never call an unreachable store a missing object, and a job that
// met an unreachable store is tried again rather than failed for good. No framework imports.

export type StoreFailure = "unreachable" | "missing" | "refused";

/** Error codes of a connection that could not be made, or broke, or timed out. */
const networkCodes = new Set([
  "ECONNREFUSED",
  "ECONNRESET",
  "ECONNABORTED",
  "EPIPE",
  "ETIMEDOUT",
  "ESOCKETTIMEDOUT",
  "EHOSTUNREACH",
  "EHOSTDOWN",
  "ENETUNREACH",
  "ENETDOWN",
  "ENOTFOUND",
  "EAI_AGAIN",
  "UND_ERR_SOCKET",
  "UND_ERR_CONNECT_TIMEOUT",
  "ERR_STREAM_PREMATURE_CLOSE",
]);

/** Names the AWS SDK gives a request that took too long or whose connection failed. */
const networkNames = new Set(["TimeoutError", "RequestTimeout", "RequestTimeoutException", "NetworkingError"]);

type Failure = {
  name?: unknown;
  code?: unknown;
  Code?: unknown;
  message?: unknown;
  errors?: unknown;
  cause?: unknown;
  $metadata?: { httpStatusCode?: number };
};

function httpStatus(e: Failure): number | undefined {
  const s = e.$metadata?.httpStatusCode;
  return typeof s === "number" ? s : undefined;
}

function isNetworkFailure(e: Failure, depth = 0): boolean {
  if (depth > 3) return false;
  const code = typeof e.code === "string" ? e.code : "";
  const name = typeof e.name === "string" ? e.name : "";
  if (networkCodes.has(code) || networkNames.has(name)) return true;
  const message = typeof e.message === "string" ? e.message : "";
  if (/socket hang up|^aborted$|premature close|connect ECONNREFUSED|read ECONNRESET/i.test(message)) return true;
  // A refused connection to every address of a host comes as an AggregateError; fetch wraps its cause.
  if (Array.isArray(e.errors) && e.errors.some((x) => x && isNetworkFailure(x as Failure, depth + 1)))
    return true;
  return typeof e.cause === "object" && e.cause !== null && isNetworkFailure(e.cause, depth + 1);
}

/**
 * How a request to the store failed, or null for an error that is not the store's (a bug,
 * a database error): "unreachable" for a connection refused, reset or timed out and for
 * answers 5xx and 429 (the store is there but cannot serve now: try again later);
 * "missing" for 404 and NoSuchKey; "refused" for any other 4xx.
 */
export function storeFailure(err: unknown): StoreFailure | null {
  if (typeof err !== "object" || err === null) return null;
  if (err instanceof StoreUnreachableError) return "unreachable";
  const e = err as Failure;
  const status = httpStatus(e);
  const name = typeof e.name === "string" ? e.name : typeof e.Code === "string" ? e.Code : "";
  if (status === 404 || name === "NoSuchKey" || name === "NotFound") return "missing";
  if (status !== undefined && (status >= 500 || status === 429)) return "unreachable";
  if (status === 408) return "unreachable";
  if (status !== undefined && status >= 400) return "refused";
  if (isNetworkFailure(e)) return "unreachable";
  return null;
}

export const isStoreUnreachable = (err: unknown): boolean => storeFailure(err) === "unreachable";
export const isObjectMissing = (err: unknown): boolean => storeFailure(err) === "missing";

/** A few words on why the store could not be reached, for logs and the job's error (no stack). */
function causeWords(err: unknown): string {
  const e = (err ?? {}) as Failure;
  const status = httpStatus(e);
  if (status !== undefined) return `it answered ${status}`;
  const code = typeof e.code === "string" ? e.code : "";
  if (code === "ECONNREFUSED") return "the connection was refused";
  if (code === "ECONNRESET" || code === "EPIPE") return "the connection was broken";
  if (code.includes("TIMEDOUT") || e.name === "TimeoutError") return "it did not answer in time";
  if (code === "ENOTFOUND" || code === "EAI_AGAIN") return "its address could not be resolved";
  return code || (typeof e.name === "string" && e.name !== "Error" ? e.name : "the connection failed");
}

/**
 * The lab's file store could not be reached: nothing was decided about the object. A
 * job that throws it is tried again by the queue; it never becomes a fixity result.
 */
export class StoreUnreachableError extends Error {
  readonly storeUnreachable = true;
  constructor(
    /** What was being done, e.g. "read flat transfer transfers/…/flat.wav". */
    readonly doing: string,
    cause?: unknown,
  ) {
    super(`The lab's file store cannot be reached (${causeWords(cause)}) while trying to ${doing}.`, {
      cause,
    });
    this.name = "StoreUnreachableError";
  }

  /** As the queue records a failed job: the plain words, without the socket error's stack. */
  toJSON() {
    return { name: this.name, message: this.message, storeUnreachable: true };
  }
}

/**
 * Runs one request to the store; an unreachable store comes out as StoreUnreachableError
 * naming what was being done. Other failures (a missing object, a refusal) pass through
 * unchanged for the caller to judge with storeFailure().
 */
export async function fromStore<T>(doing: string, request: () => Promise<T>): Promise<T> {
  try {
    return await request();
  } catch (err) {
    if (err instanceof StoreUnreachableError) throw err;
    if (isStoreUnreachable(err)) throw new StoreUnreachableError(doing, err);
    throw err;
  }
}
