import { createHash } from "node:crypto";
import type { Readable } from "node:stream";
import { DeleteObjectCommand, GetObjectCommand, HeadObjectCommand } from "@aws-sdk/client-s3";
import { env } from "../env";
import { fromStore, StoreUnreachableError } from "./errors";
import { s3 } from "./s3";

// Every function here reports an unreachable store as StoreUnreachableError (./errors);
// a missing object comes out as the SDK's own 404 error, told apart by storeFailure().

/** Byte-range reads of one stored object: what the WAV header reader needs, without fetching the whole file. */
export async function objectSource(
  key: string,
): Promise<{ size: number; read(offset: number, length: number): Promise<Uint8Array> }> {
  const head = await fromStore(`look at ${key}`, () =>
    s3().send(new HeadObjectCommand({ Bucket: env().S3_BUCKET, Key: key })),
  );
  const size = Number(head.ContentLength ?? 0);
  return {
    size,
    async read(offset: number, length: number): Promise<Uint8Array> {
      const end = Math.min(size, offset + length) - 1;
      if (end < offset) return new Uint8Array(0);
      return fromStore(`read ${key}`, async () => {
        const res = await s3().send(
          new GetObjectCommand({ Bucket: env().S3_BUCKET, Key: key, Range: `bytes=${offset}-${end}` }),
        );
        return new Uint8Array(await res.Body!.transformToByteArray());
      });
    },
  };
}

/** Streams an object through SHA-256 (bounded memory, whatever its size) and counts its bytes. */
export async function hashObject(key: string): Promise<{ sha256: string; bytes: number }> {
  // The whole read, not only its start: a store that goes away in the middle is unreachable too.
  return fromStore(`read ${key}`, async () => {
    const res = await s3().send(new GetObjectCommand({ Bucket: env().S3_BUCKET, Key: key }));
    const hash = createHash("sha256");
    let bytes = 0;
    for await (const chunk of res.Body as Readable) {
      hash.update(chunk as Buffer);
      bytes += (chunk as Buffer).length;
    }
    // A connection cut in the middle can end the body early without an error: that is an
    // unreachable store, not an object with other bytes in it.
    const announced = res.ContentLength;
    if (announced !== undefined && bytes !== Number(announced))
      throw new StoreUnreachableError(
        `read ${key} (the read stopped after ${bytes} of ${announced} bytes)`,
        Object.assign(new Error("the read stopped early"), { code: "ECONNRESET" }),
      );
    return { sha256: hash.digest("hex"), bytes };
  });
}

export async function objectStream(key: string, range?: { start: number; end: number }): Promise<Readable> {
  const res = await fromStore(`read ${key}`, () =>
    s3().send(
      new GetObjectCommand({
        Bucket: env().S3_BUCKET,
        Key: key,
        ...(range ? { Range: `bytes=${range.start}-${range.end}` } : {}),
      }),
    ),
  );
  return res.Body as Readable;
}

export async function deleteObject(key: string): Promise<void> {
  await fromStore(`delete ${key}`, () =>
    s3().send(new DeleteObjectCommand({ Bucket: env().S3_BUCKET, Key: key })),
  );
}
