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
  /**
   * Optional: bytes [offset, offset + target.length) into `target`, answering how many were
   * read (fewer only at the end of the source). A render reads through two reused buffers
   * this way rather than allocating one per chunk.
   */
  readInto?(offset: number, target: Uint8Array): Promise<number>;
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
  const readInto = async (offset: number, target: Uint8Array): Promise<number> => {
    const want = Math.max(0, Math.min(target.length, size - offset));
    let got = 0;
    while (got < want) {
      const { bytesRead } = await handle.read(target, got, want - got, offset + got);
      if (bytesRead === 0) break;
      got += bytesRead;
    }
    return got;
  };
  return {
    size,
    async read(offset: number, length: number): Promise<Uint8Array> {
      const out = new Uint8Array(Math.max(0, Math.min(length, size - offset)));
      const got = await readInto(offset, out);
      return got === out.length ? out : out.subarray(0, got);
    },
    readInto,
    close: () => handle.close(),
  };
}
