// The one place that tells an unreachable file store from a missing object
// (lib/storage/errors.ts), and the upload's rule for which failures are waited out.
import { describe, expect, it } from "vitest";
import { AppError } from "@/lib/http/errors";
import { fromStore, storeFailure, StoreUnreachableError } from "@/lib/storage/errors";
import {
  PartFailure,
  partFailureFor,
  passingFailure,
  serverOutageMessage,
  storeOutageMessage,
} from "@/lib/transfers/upload-client";

const sdkError = (name: string, status: number) =>
  Object.assign(new Error(name), { name, $metadata: { httpStatusCode: status } });
const socketError = (code: string) => Object.assign(new Error(`connect ${code} 127.0.0.1:9`), { code });

describe("storeFailure", () => {
  it("calls refused, reset and timed-out connections unreachable", () => {
    for (const code of ["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "EPIPE", "EHOSTUNREACH", "ENOTFOUND"])
      expect(storeFailure(socketError(code))).toBe("unreachable");
    expect(storeFailure(Object.assign(new Error("slow"), { name: "TimeoutError" }))).toBe("unreachable");
    expect(storeFailure(new AggregateError([socketError("ECONNREFUSED")]))).toBe("unreachable");
    expect(storeFailure(new TypeError("fetch failed", { cause: socketError("ECONNREFUSED") }))).toBe(
      "unreachable",
    );
  });

  it("calls 5xx, 429 and 408 answers unreachable: the store is there but cannot serve now", () => {
    for (const status of [500, 502, 503, 504, 429, 408])
      expect(storeFailure(sdkError("ServiceUnavailable", status))).toBe("unreachable");
  });

  it("calls 404 and NoSuchKey missing, never unreachable", () => {
    expect(storeFailure(sdkError("NoSuchKey", 404))).toBe("missing");
    expect(storeFailure(sdkError("NotFound", 404))).toBe("missing");
    expect(storeFailure(Object.assign(new Error("gone"), { name: "NoSuchKey" }))).toBe("missing");
  });

  it("calls other 4xx refusals, and errors that are not the store's nothing", () => {
    expect(storeFailure(sdkError("AccessDenied", 403))).toBe("refused");
    expect(storeFailure(new Error("a bug"))).toBeNull();
    expect(storeFailure("text")).toBeNull();
  });
});

describe("fromStore", () => {
  it("turns an unreachable store into StoreUnreachableError naming what was being done, in words without the socket's stack", async () => {
    const err = await fromStore("read transfers/x/flat.wav", () =>
      Promise.reject(socketError("ECONNREFUSED")),
    ).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(StoreUnreachableError);
    expect((err as Error).message).toBe(
      "The lab's file store cannot be reached (the connection was refused) while trying to read transfers/x/flat.wav.",
    );
    expect(JSON.parse(JSON.stringify(err))).toEqual({
      name: "StoreUnreachableError",
      message: (err as Error).message,
      storeUnreachable: true,
    });
  });

  it("lets a missing object through as the store's own 404", async () => {
    const missing = sdkError("NoSuchKey", 404);
    await expect(fromStore("read k", () => Promise.reject(missing))).rejects.toBe(missing);
  });
});

describe("the upload's passing failures", () => {
  it("waits out an unreachable store, from a part PUT or from the app's 503, and an app that cannot be reached", () => {
    expect(passingFailure(partFailureFor(0))).toBe(storeOutageMessage);
    expect(passingFailure(partFailureFor(503))).toBe(storeOutageMessage);
    expect(passingFailure(new AppError("unavailable", 503, "…", undefined, { store: "unreachable" }))).toBe(
      storeOutageMessage,
    );
    expect(passingFailure(new AppError("unavailable", 503, "The lab's database is unavailable."))).toBe(
      "The lab's database is unavailable.",
    );
    expect(passingFailure(new TypeError("fetch failed"))).toBe(serverOutageMessage);
  });

  it("does not wait out a refusal or a closed upload", () => {
    expect(passingFailure(partFailureFor(403))).toBeNull();
    expect(passingFailure(new PartFailure("cancelled", "Cancelled."))).toBeNull();
    expect(
      passingFailure(new AppError("conflict", 409, "closed", undefined, { uploadState: "refused" })),
    ).toBeNull();
    expect(passingFailure(new AppError("invalid", 422, "bad"))).toBeNull();
  });
});
