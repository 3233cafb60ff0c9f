/**
 * The upload of a flat transfer as the browser runs it (hooks/use-multipart-upload.ts),
 * with no React and no browser globals: the page gives it the means to call the app, to
 * PUT a part and to remember the upload (sessionStorage); a test gives it the same over
 * Node's fetch, so the logic tested is the logic the person uses.
 *
 * The file goes straight to the bucket by presigned multipart upload, hashed (SHA-256)
 * on the way. It is read one part at a time, in order: each slice is hashed, then sent,
 * with at most three parts in flight, so memory stays at a few parts whatever the size.
 *
 * When the lab's file store cannot be reached (a connection refused or dropped, a 5xx,
 * the app saying the store is away), the upload says so in plain words and tries again
 * with a growing pause (1 s, 2 s, 4 s … 30 s), for up to half an hour; parts already
 * stored are kept and never sent again, so once the store is back it carries on where it
 * stopped. The upload's id and the parts stored so far are remembered (per side, file
 * name and size), so "try again" after a failure, or a reload, sends only the rest: the
 * bucket's own list of parts when it can give one, the remembered list when it cannot
 * (the local stand-in cannot). Parts are still read and hashed: the checksum covers the
 * whole file, and the server recomputes it before it accepts anything.
 */
import { createSHA256 } from "hash-wasm";
import { AppError } from "../http/errors";
import { emptyFileMessage } from "../validation/text";

const CONCURRENCY = 3;
/** Tries of a part the store refused (a URL gone stale, say) before the upload fails. */
const REFUSAL_TRIES = 3;
const SIGN_BATCH = 500;

export const storeOutageMessage = "The lab's file store cannot be reached; retrying…";
export const serverOutageMessage = "The lab's server cannot be reached; retrying…";

export interface UploadDetails {
  stylusSize: string;
  stylusShape: string;
  measuredSpeedRpm?: number;
  chain: string;
  /** The register's chain, and the one item swapped in for this transfer. */
  chainId?: string;
  swapItemId?: string;
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

export type UploadPhase =
  | "idle"
  | "starting"
  | "uploading"
  | "checking"
  /** Sent, but identical to another side's transfer: waiting for the engineer to confirm or cancel. */
  | "confirm"
  | "done"
  | "failed"
  | "cancelled";

/** The store (or the app) is away and the upload waits to try again. */
export interface UploadOutage {
  message: string;
  /** When the outage was first met (ms since the epoch). */
  since: number;
  /** When the next try goes out. */
  nextTryAt: number;
  /** Tries that failed so far. */
  tries: number;
}

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
  /** In "confirm": the server's warning, naming the side that already has this file. */
  duplicate: string | null;
  result: AcceptedTransfer | null;
  outage: UploadOutage | null;
}

export const idleUpload: UploadState = {
  phase: "idle",
  fileName: null,
  totalBytes: 0,
  sentBytes: 0,
  hashedBytes: 0,
  resumedParts: 0,
  error: null,
  fields: null,
  resumable: false,
  duplicate: null,
  result: null,
  outage: null,
};

/** The file as the upload reads it: a File in the browser, bytes in a test. */
export interface UploadFile {
  name: string;
  size: number;
  slice(from: number, to: number): Promise<Uint8Array>;
}

/** Why a PUT of a part failed: the store unreachable (try again later), a refusal, or a cancel. */
export class PartFailure extends Error {
  constructor(
    readonly kind: "unreachable" | "refused" | "cancelled",
    message: string,
  ) {
    super(message);
    this.name = "PartFailure";
  }
}

/** The failure a PUT's answer means: 5xx, 429 and 408 are a store that cannot serve now; other answers are refusals. */
export function partFailureFor(status: number): PartFailure {
  if (status === 0) return new PartFailure("unreachable", "The connection to the file store failed.");
  if (status >= 500 || status === 429 || status === 408)
    return new PartFailure("unreachable", `The file store answered ${status}.`);
  return new PartFailure("refused", `The file store refused the part (${status}).`);
}

export interface UploadIo {
  /** Calls the app's API (a path under /api); a refusal is the AppError the server sent. */
  api<T>(path: string, init?: { method?: "GET" | "POST"; body?: unknown }): Promise<T>;
  /** PUTs one part to its presigned URL and answers its ETag; fails with a PartFailure. */
  putPart(
    url: string,
    body: Uint8Array,
    onProgress: (sent: number) => void,
    signal: AbortSignal,
  ): Promise<string>;
  /** Where the upload is remembered between tries (sessionStorage in the browser). */
  memory: {
    get(key: string): string | null;
    set(key: string, value: string): void;
    remove(key: string): void;
  };
}

export interface UploadOptions {
  /** The first pause after a failed try, doubled each time up to maxPauseMs. */
  firstPauseMs?: number;
  maxPauseMs?: number;
  /** How long an outage is waited out before the upload stops (it can then be tried again and resumes). */
  giveUpAfterMs?: number;
}

interface Remembered {
  uploadId: string;
  partSize: number;
  partCount: number;
  /** Parts the store has taken, by number: their ETags. */
  parts?: Record<string, string>;
}

export const uploadMemoryKey = (sideId: string, file: { name: string; size: number }) =>
  `rillbook:upload:v3:${sideId}:${file.name}:${file.size}`;

/** The server has closed the upload (refused, completed, cancelled, expired): a new try starts a new one. */
function uploadClosed(err: unknown): boolean {
  const state =
    err instanceof AppError ? (err.details as { uploadState?: string } | undefined)?.uploadState : undefined;
  return state !== undefined && state !== "completing";
}

/** The words for a failure worth waiting out, or null for one that is not (a refusal, a closed upload). */
export function passingFailure(err: unknown): string | null {
  if (err instanceof PartFailure) return err.kind === "unreachable" ? storeOutageMessage : null;
  if (err instanceof AppError) {
    if (err.status === 503) {
      const store = (err.details as { store?: string } | undefined)?.store === "unreachable";
      return store ? storeOutageMessage : err.message;
    }
    if (err.status === 502 || err.status === 504) return serverOutageMessage;
    return null;
  }
  // fetch fails with a TypeError when the app cannot be reached at all.
  if (err instanceof TypeError) return serverOutageMessage;
  return null;
}

class Cancelled extends Error {}

function pause(ms: number, signal: AbortSignal): Promise<void> {
  return new Promise((resolve, reject) => {
    if (signal.aborted) return reject(new Cancelled("Cancelled."));
    const done = () => {
      clearTimeout(t);
      signal.removeEventListener("abort", stop);
    };
    const stop = () => {
      done();
      reject(new Cancelled("Cancelled."));
    };
    const t = setTimeout(() => {
      done();
      resolve();
    }, ms);
    signal.addEventListener("abort", stop);
  });
}

function readMemory(io: UploadIo, key: string): Remembered | null {
  try {
    const raw = io.memory.get(key);
    return raw ? (JSON.parse(raw) as Remembered) : null;
  } catch {
    return null;
  }
}

/**
 * Runs one upload to its end: accepted (the transfer as recorded), or failed or cancelled
 * (null; the state says why). Every change is handed to onState.
 */
export async function runUpload(args: {
  sideId: string;
  file: UploadFile;
  details: UploadDetails;
  io: UploadIo;
  onState: (update: (s: UploadState) => UploadState) => void;
  signal: AbortSignal;
  options?: UploadOptions;
  /**
   * Asked when the server holds the upload because another side has a file with the same
   * SHA-256 (its warning names that side): true completes it, false abandons it. Without
   * it, such an upload fails with the server's warning.
   */
  confirmDuplicate?: (warning: string) => Promise<boolean>;
}): Promise<AcceptedTransfer | null> {
  const { sideId, file, details, io, onState, signal } = args;
  const firstPauseMs = args.options?.firstPauseMs ?? 1000;
  const maxPauseMs = args.options?.maxPauseMs ?? 30_000;
  const giveUpAfterMs = args.options?.giveUpAfterMs ?? 30 * 60_000;
  const key = uploadMemoryKey(sideId, file);
  let session: Remembered | null = null;
  const cancelled = () => signal.aborted;

  // One outage at a time, whichever request met it; the first success ends it.
  let outage: UploadOutage | null = null;
  const showOutage = (o: UploadOutage | null) => {
    outage = o;
    onState((st) => ({ ...st, outage: o }));
  };

  /** Tries `attempt` until it succeeds, waiting out a passing failure with a growing pause. */
  const persist = async <T>(attempt: () => Promise<T>): Promise<T> => {
    let tries = 0;
    for (;;) {
      if (cancelled()) throw new Cancelled("Cancelled.");
      try {
        const result = await attempt();
        if (outage) showOutage(null);
        return result;
      } catch (err) {
        if (cancelled() || err instanceof Cancelled) throw new Cancelled("Cancelled.");
        const words = passingFailure(err);
        if (!words) throw err;
        tries++;
        const since = outage?.since ?? Date.now();
        if (Date.now() - since >= giveUpAfterMs) {
          const seconds = Math.round((Date.now() - since) / 1000);
          const spent = seconds < 90 ? `${seconds} s` : `${Math.round(seconds / 60)} minutes`;
          throw new Error(
            `${words.replace(/; retrying…$/, "")}: tried for ${spent}. The parts already stored are kept: try again later to carry on from there.`,
          );
        }
        const wait = Math.min(maxPauseMs, firstPauseMs * 2 ** Math.min(tries - 1, 20));
        // A little spread, so the parts in flight do not all knock at once.
        const jittered = Math.round(wait * (0.8 + 0.4 * Math.random()));
        showOutage({
          message: words,
          since,
          nextTryAt: Date.now() + jittered,
          tries: (outage?.tries ?? 0) + 1,
        });
        await pause(jittered, signal);
      }
    }
  };

  if (file.size === 0) {
    // Nothing to send: say so here rather than as the server's refusal of a start.
    onState(() => ({ ...idleUpload, phase: "failed", fileName: file.name, error: emptyFileMessage }));
    return null;
  }
  onState(() => ({ ...idleUpload, phase: "starting", fileName: file.name, totalBytes: file.size }));
  try {
    // Resume a remembered upload: the parts the bucket lists, or the ones remembered when it cannot list them.
    let done = new Map<number, string>();
    session = readMemory(io, key);
    if (session) {
      const s = session;
      const expected = (n: number) => Math.min(s.partSize, file.size - (n - 1) * s.partSize);
      try {
        const listed = await persist(() =>
          io.api<{ parts: { partNumber: number; etag: string; size: number }[] | null }>(
            `/api/uploads?uploadId=${encodeURIComponent(s.uploadId)}`,
          ),
        );
        done = listed.parts
          ? new Map(
              listed.parts
                .filter((p) => p.size === expected(p.partNumber))
                .map((p) => [p.partNumber, p.etag]),
            )
          : new Map(Object.entries(s.parts ?? {}).map(([n, etag]) => [Number(n), etag]));
      } catch (err) {
        if (err instanceof Cancelled) throw err;
        // The upload is closed or gone: start a new one.
        session = null;
        io.memory.remove(key);
      }
    }
    const urls = new Map<number, string>();
    if (!session) {
      const started = await persist(() =>
        io.api<Remembered & { urls: { partNumber: number; url: string }[] }>("/api/uploads", {
          method: "POST",
          body: { sideId, fileName: file.name, bytes: file.size },
        }),
      );
      session = {
        uploadId: started.uploadId,
        partSize: started.partSize,
        partCount: started.partCount,
        parts: {},
      };
      io.memory.set(key, JSON.stringify(session));
      for (const u of started.urls) urls.set(u.partNumber, u.url);
    }
    const s = session;
    const remember = (n: number, etag: string) => {
      s.parts = { ...s.parts, [n]: etag };
      io.memory.set(key, JSON.stringify(s));
    };
    const sign = async (partNumbers: number[]) => {
      const r = await io.api<{ urls: { partNumber: number; url: string }[] }>("/api/uploads/parts", {
        method: "POST",
        body: { uploadId: s.uploadId, partNumbers },
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
    let hashed = 0;
    const report = () => {
      let inFlight = 0;
      for (const v of sentPerPart.values()) inFlight += v;
      onState((st) => ({
        ...st,
        phase: "uploading",
        sentBytes: Math.min(file.size, doneBytes + inFlight),
        hashedBytes: hashed,
      }));
    };
    onState((st) => ({ ...st, phase: "uploading", resumedParts: done.size }));

    const hasher = await createSHA256();
    hasher.init();
    const etags = new Map<number, string>(done);
    const running = new Set<Promise<void>>();
    // The first part that failed for good (set from the parts' own promises).
    const failed: { error: Error | null } = { error: null };
    const throwIfFailed = () => {
      if (failed.error) throw failed.error;
    };

    const sendPart = async (n: number, body: Uint8Array) => {
      for (let refusals = 0; ;) {
        try {
          const etag = await persist(async () => {
            const url = await urlFor(n);
            try {
              return await io.putPart(
                url,
                body,
                (sent) => {
                  sentPerPart.set(n, sent);
                  report();
                },
                signal,
              );
            } catch (err) {
              sentPerPart.delete(n);
              report();
              // A fresh URL for the next try: the old one may have expired meanwhile.
              urls.delete(n);
              throw err;
            }
          });
          etags.set(n, etag);
          remember(n, etag);
          sentPerPart.delete(n);
          doneBytes += body.byteLength;
          report();
          return;
        } catch (err) {
          if (err instanceof PartFailure && err.kind === "cancelled") throw new Cancelled("Cancelled.");
          if (!(err instanceof PartFailure && err.kind === "refused") || ++refusals >= REFUSAL_TRIES)
            throw err;
          await pause(500 * refusals, signal);
        }
      }
    };

    for (let n = 1; n <= s.partCount; n++) {
      if (cancelled()) throw new Cancelled("Cancelled.");
      throwIfFailed();
      const from = (n - 1) * s.partSize;
      const slice = await file.slice(from, Math.min(file.size, from + s.partSize));
      hasher.update(slice);
      hashed += slice.byteLength;
      if (done.has(n)) {
        doneBytes += slice.byteLength;
        report();
        continue;
      }
      while (running.size >= CONCURRENCY) await Promise.race(running);
      throwIfFailed();
      const p: Promise<void> = sendPart(n, slice)
        .catch((err: unknown) => {
          failed.error ??= err instanceof Error ? err : new Error(String(err));
        })
        .finally(() => running.delete(p));
      running.add(p);
      report();
    }
    await Promise.all(running);
    throwIfFailed();
    const sha256 = hasher.digest("hex");

    onState((st) => ({ ...st, phase: "checking", sentBytes: file.size, hashedBytes: file.size }));
    const parts = [...etags.entries()]
      .sort((a, b) => a[0] - b[0])
      .map(([partNumber, etag]) => ({ partNumber, etag }));
    const complete = (confirmDuplicate: boolean) =>
      persist(() =>
        io.api<AcceptedTransfer>("/api/uploads/complete", {
          method: "POST",
          body: { uploadId: s.uploadId, parts, sha256, bytes: file.size, ...details, confirmDuplicate },
        }),
      );
    try {
      let result: AcceptedTransfer;
      try {
        result = await complete(false);
      } catch (err) {
        if (!(err instanceof AppError && err.code === "duplicate_file" && args.confirmDuplicate)) throw err;
        // The upload stays open on the server while the engineer decides.
        onState((st) => ({ ...st, phase: "confirm", duplicate: err.message }));
        if (!(await args.confirmDuplicate(err.message)) || cancelled()) throw new Cancelled();
        onState((st) => ({ ...st, phase: "checking", duplicate: null }));
        result = await complete(true);
      }
      io.memory.remove(key);
      onState((st) => ({ ...st, phase: "done", duplicate: null, result, outage: null }));
      return result;
    } catch (err) {
      // Refused (and what was stored deleted), or already closed: a new try starts afresh.
      if (uploadClosed(err)) io.memory.remove(key);
      throw err;
    }
  } catch (err) {
    if (err instanceof Cancelled || cancelled()) {
      if (session) {
        const uploadId = session.uploadId;
        await io.api("/api/uploads/abort", { method: "POST", body: { uploadId } }).catch(() => undefined);
        io.memory.remove(key);
      }
      onState((st) => ({ ...st, phase: "cancelled", error: null, duplicate: null, outage: null }));
      return null;
    }
    if (uploadClosed(err)) io.memory.remove(key);
    const fields = err instanceof AppError && err.fields ? err.fields : null;
    const resumable = !fields && !uploadClosed(err);
    onState((st) => ({
      ...st,
      phase: "failed",
      error: err instanceof Error ? err.message : String(err),
      fields,
      resumable,
      outage: null,
    }));
    return null;
  }
}
