import { AppError, type ErrorCode } from "./errors";

/** Fetches JSON from the app's API; a failed answer comes back as the same AppError the server threw. */
export async function fetchJson<T>(url: string, init?: RequestInit): Promise<T> {
  const res = await fetch(url, { ...init, headers: { accept: "application/json", ...(init?.body ? { "content-type": "application/json" } : {}), ...init?.headers } });
  const body = await res.json().catch(() => null);
  if (!res.ok) {
    const e = body?.error as { code?: ErrorCode; message?: string; fields?: Record<string, string[]>; details?: unknown } | undefined;
    throw new AppError(e?.code ?? "internal", res.status, e?.message ?? `The server answered ${res.status}.`, e?.fields, e?.details);
  }
  return body as T;
}
