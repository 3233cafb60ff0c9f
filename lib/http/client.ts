import { AppError, type ErrorCode } from "./errors";

/** The `error` of a failed answer, as lib/http/errors.ts writes it. */
interface ErrorBody {
  code?: ErrorCode;
  message?: string;
  fields?: Record<string, string[]>;
  details?: unknown;
}

/** Fetches JSON from the app's API; a failed answer comes back as the same AppError the server threw. */
export async function fetchJson<T>(url: string, init?: RequestInit): Promise<T> {
  const res = await fetch(url, {
    ...init,
    headers: {
      accept: "application/json",
      ...(init?.body ? { "content-type": "application/json" } : {}),
      ...init?.headers,
    },
  });
  return answerJson<T>(res, init?.method);
}

/** The JSON body of an answer from the app's API, or the AppError it carries. */
export async function answerJson<T>(res: Response, method = "GET"): Promise<T> {
  const body: unknown = await res.json().catch(() => null);
  if (!res.ok) {
    const e = (body as { error?: ErrorBody } | null)?.error;
    const message = e?.message ?? `The server answered ${res.status}.`;
    // A read (a list's filters from the address, say) has no form to show field errors beside: name them in the message.
    const read = method.toUpperCase() === "GET";
    const said =
      read && e?.fields
        ? `${message} ${Object.entries(e.fields)
            .map(([field, msgs]) => `${field}: ${msgs.join(" ")}`)
            .join(" ")}`
        : message;
    throw new AppError(e?.code ?? "internal", res.status, said, e?.fields, e?.details);
  }
  return body as T;
}
