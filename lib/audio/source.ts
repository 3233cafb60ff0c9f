/**
 * Random-access byte sources. The header reader and the renderer only ever ask
 * for byte ranges, so the same code runs on a local file, a buffer in memory,
 * or an object in S3 read with ranged GETs (lib/storage supplies that one).
 */
import { open } from "node:fs/promises";

export interface ByteSource {
  /** Total size in bytes. */
  readonly size: number;
  /**
   * Bytes [offset, offset + length). May return fewer bytes only when the range
   * runs past the end of the source.
   */
  read(offset: number, length: number): Promise<Uint8Array>;
}

export interface ClosableByteSource extends ByteSource {
  close(): Promise<void>;
}

export function bufferSource(bytes: Uint8Array): ByteSource {
  return {
    size: bytes.length,
    read(offset: number, length: number): Promise<Uint8Array> {
      const start = Math.min(Math.max(0, offset), bytes.length);
      return Promise.resolve(bytes.subarray(start, Math.min(bytes.length, start + Math.max(0, length))));
    },
  };
}

/** A local file; call close() when done. */
export async function openFileSource(path: string): Promise<ClosableByteSource> {
  const handle = await open(path, "r");
  const { size } = await handle.stat();
  return {
    size,
    async read(offset: number, length: number): Promise<Uint8Array> {
      const want = Math.max(0, Math.min(length, size - offset));
      const out = new Uint8Array(want);
      let got = 0;
      while (got < want) {
        const { bytesRead } = await handle.read(out, got, want - got, offset + got);
        if (bytesRead === 0) break;
        got += bytesRead;
      }
      return got === want ? out : out.subarray(0, got);
    },
    close: () => handle.close(),
  };
}
