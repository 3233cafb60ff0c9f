"use client";
/**
 * The bench's upload of a flat transfer: lib/transfers/upload-client.ts does the work
 * (parts, checksum, waiting out a file store that cannot be reached, resuming); this hook
 * gives it the browser's means (fetch, XMLHttpRequest for the part PUTs with progress,
 * sessionStorage to remember the upload) and keeps its state for the page.
 */
import { useCallback, useRef, useState } from "react";
import { fetchJson } from "@/lib/http/client";
import {
  type AcceptedTransfer,
  idleUpload,
  PartFailure,
  partFailureFor,
  runUpload,
  type UploadDetails,
  type UploadIo,
  type UploadState,
} from "@/lib/transfers/upload-client";

export type {
  AcceptedTransfer,
  UploadDetails,
  UploadPhase,
  UploadState,
} from "@/lib/transfers/upload-client";

/** PUT one part with progress; resolves with its ETag. */
function putPart(
  url: string,
  body: Uint8Array,
  onProgress: (sent: number) => void,
  signal: AbortSignal,
): Promise<string> {
  return new Promise((resolve, reject) => {
    if (signal.aborted) return reject(new PartFailure("cancelled", "Cancelled."));
    const xhr = new XMLHttpRequest();
    const abort = () => xhr.abort();
    signal.addEventListener("abort", abort);
    const settle = () => signal.removeEventListener("abort", abort);
    xhr.open("PUT", url);
    xhr.upload.onprogress = (e) => onProgress(e.loaded);
    xhr.onload = () => {
      settle();
      const etag = xhr.getResponseHeader("ETag");
      if (xhr.status >= 200 && xhr.status < 300 && etag) resolve(etag);
      else if (xhr.status >= 200 && xhr.status < 300)
        reject(
          new PartFailure(
            "refused",
            "The file store did not return the part's ETag (check its CORS ExposeHeaders).",
          ),
        );
      else reject(partFailureFor(xhr.status));
    };
    // A connection refused or dropped: the browser tells nothing more than that.
    xhr.onerror = () => {
      settle();
      reject(partFailureFor(0));
    };
    xhr.onabort = () => {
      settle();
      reject(new PartFailure("cancelled", "Cancelled."));
    };
    xhr.send(body as Uint8Array<ArrayBuffer>);
  });
}

const browserIo: UploadIo = {
  api: (path, init) =>
    fetchJson(path, {
      method: init?.method ?? "GET",
      ...(init?.body !== undefined ? { body: JSON.stringify(init.body) } : {}),
    }),
  putPart,
  memory: {
    get: (k) => {
      try {
        return sessionStorage.getItem(k);
      } catch {
        return null;
      }
    },
    set: (k, v) => {
      try {
        sessionStorage.setItem(k, v);
      } catch {
        /* storage full or refused: the upload still runs, it only cannot be resumed after a reload */
      }
    },
    remove: (k) => {
      try {
        sessionStorage.removeItem(k);
      } catch {
        /* nothing remembered */
      }
    },
  },
};

export function useMultipartUpload() {
  const [state, setState] = useState<UploadState>(idleUpload);
  const abortRef = useRef<AbortController | null>(null);
  /** In "confirm": answers the upload's question (true: accept the identical file). */
  const decideRef = useRef<((accept: boolean) => void) | null>(null);

  const start = useCallback(
    async (sideId: string, file: File, details: UploadDetails): Promise<AcceptedTransfer | null> => {
      const controller = new AbortController();
      abortRef.current = controller;
      try {
        return await runUpload({
          sideId,
          file: {
            name: file.name,
            size: file.size,
            slice: async (from, to) => new Uint8Array(await file.slice(from, to).arrayBuffer()),
          },
          details,
          io: browserIo,
          onState: setState,
          signal: controller.signal,
          confirmDuplicate: () =>
            new Promise<boolean>((resolve) => {
              decideRef.current = resolve;
            }),
        });
      } finally {
        decideRef.current = null;
        if (abortRef.current === controller) abortRef.current = null;
      }
    },
    [],
  );

  const cancel = useCallback(() => {
    abortRef.current?.abort();
    decideRef.current?.(false);
  }, []);
  const reset = useCallback(() => setState(idleUpload), []);
  /** Accepts the upload waiting in "confirm" although another side has the same file. */
  const confirmDuplicate = useCallback(() => decideRef.current?.(true), []);

  return { state, start, cancel, reset, confirmDuplicate };
}
