// The upload engine the bench uses (lib/transfers/upload-client.ts), given Node's fetch in
// place of the browser's: the app's API with a session cookie, part PUTs to the presigned
// URLs, and a Map for sessionStorage. Errors are read by the same code as the browser's
// (answerJson), and a PUT's failure is judged by the same rule (partFailureFor).
import { answerJson } from "@/lib/http/client";
import { PartFailure, partFailureFor, type UploadIo } from "@/lib/transfers/upload-client";
import { appUrl, sameOrigin } from "./app";

export function nodeUploadIo(cookie: string, memory = new Map<string, string>()): UploadIo {
  return {
    async api<T>(path: string, init?: { method?: "GET" | "POST"; body?: unknown }): Promise<T> {
      const method = init?.method ?? "GET";
      const res = await fetch(`${appUrl}${path}`, {
        method,
        headers: {
          accept: "application/json",
          cookie,
          ...sameOrigin,
          ...(init?.body !== undefined ? { "content-type": "application/json" } : {}),
        },
        body: init?.body !== undefined ? JSON.stringify(init.body) : undefined,
      });
      return answerJson<T>(res, method);
    },
    async putPart(url, body, onProgress, signal) {
      let res: Response;
      try {
        res = await fetch(url, { method: "PUT", body: Buffer.from(body), signal });
      } catch {
        // fetch tells a refused or broken connection only as a TypeError, as XMLHttpRequest's onerror does.
        if (signal.aborted) throw new PartFailure("cancelled", "Cancelled.");
        throw partFailureFor(0);
      }
      await res.arrayBuffer().catch(() => undefined);
      const etag = res.headers.get("etag");
      if (!res.ok) throw partFailureFor(res.status);
      if (!etag) throw new PartFailure("refused", "The file store did not return the part's ETag.");
      onProgress(body.byteLength);
      return etag;
    },
    memory: {
      get: (k) => memory.get(k) ?? null,
      set: (k, v) => void memory.set(k, v),
      remove: (k) => void memory.delete(k),
    },
  };
}

/** The part number a presigned part URL is for. */
export function partNumberOf(url: string): number {
  return Number(new URL(url).searchParams.get("partNumber"));
}
