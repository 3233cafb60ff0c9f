/**
 * A ByteSource over a presigned URL that answers Range requests: the WAV header
 * reader and the audition player read only the bytes they need, never the file.
 */
import type { ByteSource } from "@/lib/audio/source";

export async function rangeFetch(
  url: string,
  offset: number,
  length: number,
  signal?: AbortSignal,
): Promise<Uint8Array> {
  if (length <= 0) return new Uint8Array(0);
  const res = await fetch(url, { headers: { range: `bytes=${offset}-${offset + length - 1}` }, signal });
  if (res.status !== 206 && res.status !== 200)
    throw new Error(`The storage answered ${res.status} for bytes ${offset}–${offset + length - 1}.`);
  const bytes = new Uint8Array(await res.arrayBuffer());
  // A server that ignores Range sends the whole object: take the slice we asked for.
  return res.status === 200 ? bytes.subarray(offset, offset + length) : bytes;
}

export function rangeSource(url: string, size: number, signal?: AbortSignal): ByteSource {
  return {
    size,
    read: (offset, length) => rangeFetch(url, offset, Math.max(0, Math.min(length, size - offset)), signal),
  };
}
