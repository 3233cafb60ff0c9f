"use client";
/**
 * Uploads a flat transfer straight to the bucket by presigned multipart upload,
 * hashing it (SHA-256) on the way. The file is read one part at a time, in
 * order: each slice is hashed, then sent, with at most three parts in flight, so
 * memory stays at a few parts whatever the file's size. A failed part is retried
 * up to three times with a fresh URL. The upload's id (the only name the server
 * takes for it) is kept in sessionStorage (per side, file name and size), so "try again" after a failure
 * or a reload lists the parts already stored and sends only the rest (they are
 * still read and hashed: the checksum covers the whole file).
 */
import { createSHA256 } from "hash-wasm";
import { useCallback, useRef, useState } from "react";
import { fetchJson } from "@/lib/http/client";
import { AppError } from "@/lib/http/errors";

const CONCURRENCY = 3;
const RETRIES = 3;
const SIGN_BATCH = 500;

export interface UploadDetails {
  stylusSize: string;
  stylusShape: string;
  measuredSpeedRpm?: number;
  chain: string;
}

export interface AcceptedTransfer {
  transferId: string;
  sha256: string;
  bytes: number;
  technical: {
    container: string;
    encoding: string;
    bitsPerSample: number;
    channels: number;
    sampleRateHz: number;
    frames: number;
    durationSeconds: number;
  };
}

export type UploadPhase = "idle" | "starting" | "uploading" | "checking" | "done" | "failed" | "cancelled";

export interface UploadState {
  phase: UploadPhase;
  fileName: string | null;
  totalBytes: number;
  sentBytes: number;
  hashedBytes: number;
  resumedParts: number;
  error: string | null;
  /** Field errors from the server (stylus, speed, chain). */
  fields: Record<string, string[]> | null;
  /** Whether "try again" picks up the same upload (false once the server has refused or closed it). */
  resumable: boolean;
  result: AcceptedTransfer | null;
}

interface Session {
  uploadId: string;
  partSize: number;
  partCount: number;
}

const idle: UploadState = {
  phase: "idle",
  fileName: null,
  totalBytes: 0,
  sentBytes: 0,
  hashedBytes: 0,
  resumedParts: 0,
  error: null,
  fields: null,
  resumable: false,
  result: null,
};

/** The server has closed the upload (refused, completed, cancelled, expired): a new try starts a new one. */
function uploadClosed(err: unknown): boolean {
  const state =
    err instanceof AppError ? (err.details as { uploadState?: string } | undefined)?.uploadState : undefined;
  return state !== undefined && state !== "completing";
}

const storageKey = (sideId: string, file: File) => `rillbook:upload:v2:${sideId}:${file.name}:${file.size}`;

function readSession(k: string): Session | null {
  try {
    const raw = sessionStorage.getItem(k);
    return raw ? (JSON.parse(raw) as Session) : null;
  } catch {
    return null;
  }
}

class Cancelled extends Error {}

/** PUT one part with progress; resolves with its ETag. */
function putPart(
  url: string,
  body: ArrayBuffer,
  onProgress: (sent: number) => void,
  xhrs: Set<XMLHttpRequest>,
): Promise<string> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhrs.add(xhr);
    xhr.open("PUT", url);
    xhr.upload.onprogress = (e) => onProgress(e.loaded);
    xhr.onload = () => {
      xhrs.delete(xhr);
      const etag = xhr.getResponseHeader("ETag");
      if (xhr.status >= 200 && xhr.status < 300 && etag) resolve(etag);
      else
        reject(
          new Error(
            xhr.status >= 200 && xhr.status < 300
              ? "The storage did not return the part's ETag (check its CORS ExposeHeaders)."
              : `The storage answered ${xhr.status}.`,
          ),
        );
    };
    xhr.onerror = () => {
      xhrs.delete(xhr);
      reject(new Error("The connection to the storage failed."));
    };
    xhr.onabort = () => {
      xhrs.delete(xhr);
      reject(new Cancelled("Cancelled."));
    };
    xhr.send(body);
  });
}

export function useMultipartUpload() {
  const [state, setState] = useState<UploadState>(idle);
  const cancelRef = useRef<(() => void) | null>(null);

  const start = useCallback(async (sideId: string, file: File, details: UploadDetails) => {
    let cancelled = false;
    const xhrs = new Set<XMLHttpRequest>();
    let session: Session | null = null;
    cancelRef.current = () => {
      cancelled = true;
      for (const x of xhrs) x.abort();
    };
    const sk = storageKey(sideId, file);
    setState({ ...idle, phase: "starting", fileName: file.name, totalBytes: file.size });
    try {
      // Resume a stored upload when the bucket still knows it.
      let done = new Map<number, string>();
      session = readSession(sk);
      if (session) {
        try {
          const listed = await fetchJson<{ parts: { partNumber: number; etag: string; size: number }[] }>(
            `/api/uploads?uploadId=${encodeURIComponent(session.uploadId)}`,
          );
          const expected = (n: number) =>
            Math.min(session!.partSize, file.size - (n - 1) * session!.partSize);
          done = new Map(
            listed.parts.filter((p) => p.size === expected(p.partNumber)).map((p) => [p.partNumber, p.etag]),
          );
        } catch {
          session = null;
          sessionStorage.removeItem(sk);
        }
      }
      const urls = new Map<number, string>();
      if (!session) {
        const started = await fetchJson<Session & { urls: { partNumber: number; url: string }[] }>(
          "/api/uploads",
          { method: "POST", body: JSON.stringify({ sideId, fileName: file.name, bytes: file.size }) },
        );
        session = { uploadId: started.uploadId, partSize: started.partSize, partCount: started.partCount };
        sessionStorage.setItem(sk, JSON.stringify(session));
        for (const u of started.urls) urls.set(u.partNumber, u.url);
      }
      const s = session;
      const sign = async (partNumbers: number[]) => {
        const r = await fetchJson<{ urls: { partNumber: number; url: string }[] }>("/api/uploads/parts", {
          method: "POST",
          body: JSON.stringify({ uploadId: s.uploadId, partNumbers }),
        });
        for (const u of r.urls) urls.set(u.partNumber, u.url);
      };
      const urlFor = async (n: number) => {
        if (!urls.has(n)) {
          const batch: number[] = [];
          for (let p = n; p <= s.partCount && batch.length < SIGN_BATCH; p++)
            if (!done.has(p) && !urls.has(p)) batch.push(p);
          await sign(batch.length ? batch : [n]);
        }
        return urls.get(n)!;
      };

      const sentPerPart = new Map<number, number>();
      let doneBytes = 0;
      const report = (hashed: number) => {
        let inFlight = 0;
        for (const v of sentPerPart.values()) inFlight += v;
        setState((st) => ({
          ...st,
          phase: "uploading",
          sentBytes: Math.min(file.size, doneBytes + inFlight),
          hashedBytes: hashed,
        }));
      };
      setState((st) => ({ ...st, phase: "uploading", resumedParts: done.size }));

      const hasher = await createSHA256();
      hasher.init();
      const etags = new Map<number, string>(done);
      const running = new Set<Promise<void>>();
      // Held in an object: the part uploads set it from their callbacks.
      const failed: { error: Error | null } = { error: null };
      const throwIfFailed = () => {
        if (failed.error) throw failed.error;
      };
      let hashed = 0;

      const sendPart = async (n: number, body: ArrayBuffer) => {
        for (let attempt = 0; ; attempt++) {
          if (cancelled) throw new Cancelled("Cancelled.");
          try {
            const url = await urlFor(n);
            const etag = await putPart(
              url,
              body,
              (sent) => {
                sentPerPart.set(n, sent);
                report(hashed);
              },
              xhrs,
            );
            etags.set(n, etag);
            sentPerPart.delete(n);
            doneBytes += body.byteLength;
            report(hashed);
            return;
          } catch (err) {
            sentPerPart.delete(n);
            if (err instanceof Cancelled || attempt + 1 >= RETRIES) throw err;
            // A fresh URL for the retry: the old one may have expired.
            urls.delete(n);
            await sign([n]);
            await new Promise((r) => setTimeout(r, 500 * (attempt + 1)));
          }
        }
      };

      for (let n = 1; n <= s.partCount; n++) {
        if (cancelled) throw new Cancelled("Cancelled.");
        throwIfFailed();
        const from = (n - 1) * s.partSize;
        const slice = await file.slice(from, Math.min(file.size, from + s.partSize)).arrayBuffer();
        hasher.update(new Uint8Array(slice));
        hashed += slice.byteLength;
        if (done.has(n)) {
          doneBytes += slice.byteLength;
          report(hashed);
          continue;
        }
        while (running.size >= CONCURRENCY) await Promise.race(running);
        throwIfFailed();
        const p: Promise<void> = sendPart(n, slice)
          .catch((err) => {
            failed.error ??= err instanceof Error ? err : new Error(String(err));
          })
          .finally(() => running.delete(p));
        running.add(p);
        report(hashed);
      }
      await Promise.all(running);
      throwIfFailed();
      const sha256 = hasher.digest("hex");

      setState((st) => ({ ...st, phase: "checking", sentBytes: file.size, hashedBytes: file.size }));
      const parts = [...etags.entries()]
        .sort((a, b) => a[0] - b[0])
        .map(([partNumber, etag]) => ({ partNumber, etag }));
      try {
        const result = await fetchJson<AcceptedTransfer>("/api/uploads/complete", {
          method: "POST",
          body: JSON.stringify({ uploadId: s.uploadId, parts, sha256, bytes: file.size, ...details }),
        });
        sessionStorage.removeItem(sk);
        setState((st) => ({ ...st, phase: "done", result }));
        return result;
      } catch (err) {
        // Refused (and what was stored deleted), or already closed: a new try starts afresh.
        if (uploadClosed(err)) sessionStorage.removeItem(sk);
        throw err;
      }
    } catch (err) {
      if (err instanceof Cancelled || cancelled) {
        if (session) {
          await fetchJson("/api/uploads/abort", {
            method: "POST",
            body: JSON.stringify({ uploadId: session.uploadId }),
          }).catch(() => undefined);
          sessionStorage.removeItem(sk);
        }
        setState((st) => ({ ...st, phase: "cancelled", error: null }));
        return null;
      }
      if (uploadClosed(err)) sessionStorage.removeItem(sk);
      const fields = err instanceof AppError && err.fields ? err.fields : null;
      const resumable = !fields && !uploadClosed(err);
      setState((st) => ({
        ...st,
        phase: "failed",
        error: err instanceof Error ? err.message : String(err),
        fields,
        resumable,
      }));
      return null;
    } finally {
      cancelRef.current = null;
    }
  }, []);

  const cancel = useCallback(() => cancelRef.current?.(), []);
  const reset = useCallback(() => setState(idle), []);

  return { state, start, cancel, reset };
}
