// A chunk of odd size must be followed by a pad byte (Microsoft RIFF: chunks start on even
// offsets). A file whose writer left it out is refused with that reason.
import { describe, expect, it } from "vitest";
import { bufferSource, readWavHeader } from "@/lib/audio";

function chunk(id: string, body: Buffer, pad: boolean): Buffer {
  const h = Buffer.alloc(8);
  h.write(id, 0, "ascii");
  h.writeUInt32LE(body.length, 4);
  return Buffer.concat([h, body, pad && body.length % 2 ? Buffer.alloc(1) : Buffer.alloc(0)]);
}

/** 16-bit mono 44.1 kHz: fmt, an odd-sized LIST chunk, then data (with or without the pad byte). */
function wav({ pad, frames = 1000 }: { pad: boolean; frames?: number }): Buffer {
  const fmt = Buffer.alloc(16);
  fmt.writeUInt16LE(1, 0); // PCM
  fmt.writeUInt16LE(1, 2); // mono
  fmt.writeUInt32LE(44_100, 4);
  fmt.writeUInt32LE(88_200, 8);
  fmt.writeUInt16LE(2, 12);
  fmt.writeUInt16LE(16, 14);
  const list = Buffer.from("INFOISFT\u0005\u0000\u0000\u0000abcde", "latin1"); // 17 bytes: odd
  const body = Buffer.concat([
    Buffer.from("WAVE"),
    chunk("fmt ", fmt, true),
    chunk("LIST", list, pad),
    chunk("data", Buffer.alloc(frames * 2, 7), true),
  ]);
  const riff = Buffer.alloc(8);
  riff.write("RIFF", 0, "ascii");
  riff.writeUInt32LE(body.length, 4);
  return Buffer.concat([riff, body]);
}

describe("a chunk's pad byte", () => {
  it("is read past when present", async () => {
    const h = await readWavHeader(bufferSource(wav({ pad: true })));
    expect(h.frames).toBe(1000);
  });

  it("missing after an odd-sized chunk: refused with that reason, naming the chunk and the one that starts early", async () => {
    // 1000 frames: the data size's low byte (0xd0) is not a letter, so the misread id is not a chunk id.
    for (const frames of [1000, 1068]) {
      const err = await readWavHeader(bufferSource(wav({ pad: false, frames }))).catch((e: Error) => e);
      expect(err).toBeInstanceOf(Error);
      expect((err as Error).message).toMatch(/LIST chunk at byte offset 36 has an odd size \(17 bytes\)/);
      expect((err as Error).message).toMatch(/not followed by the pad byte/);
      expect((err as Error).message).toMatch(/\("data"\) starts one byte early/);
      expect((err as Error).message).not.toMatch(/ataX|declares/);
    }
  });
});
