import { readFile } from "node:fs/promises";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import { bufferSource, decodeFrames, openFileSource, readWavHeader, WavError } from "@/lib/audio";
import type { ByteSource, WavHeader } from "@/lib/audio";
import { buildWavCorpus } from "../support/wav-corpus";
import type { WavCorpus } from "../support/wav-corpus";

let corpus: WavCorpus;
beforeAll(async () => {
  corpus = await buildWavCorpus();
});
afterAll(async () => {
  await corpus?.cleanup();
});

async function headerOf(path: string): Promise<WavHeader> {
  const source = await openFileSource(path);
  try {
    return await readWavHeader(source);
  } finally {
    await source.close();
  }
}

describe("readWavHeader on the good corpus", () => {
  it("reports what each generator wrote, and the data decodes to the stored values", async () => {
    for (const file of corpus.good) {
      const h = await headerOf(file.path);
      // Source: the generator's own parameters (wavefile.fromScratch / sox -r -b -c / BwfWriter options).
      expect(
        {
          container: h.container,
          format: h.format,
          bitsPerSample: h.bitsPerSample,
          channels: h.channels,
          sampleRateHz: h.sampleRateHz,
          frames: h.frames,
          extensible: h.extensible,
        },
        file.name,
      ).toEqual(file.expect);
      expect(h.durationSeconds).toBeCloseTo(file.expect.frames / file.expect.sampleRateHz, 12);
      const bytes = (await readFile(file.path)).subarray(h.dataOffset, h.dataOffset + h.dataBytes);
      const decoded = decodeFrames(
        new Uint8Array(bytes),
        { format: h.format, bitsPerSample: h.bitsPerSample },
        h.channels,
      );
      if (file.stored) {
        // Source: the values handed to the writer (integer codes for PCM, floats for float).
        const scale = h.format === "pcm" ? 2 ** (h.bitsPerSample - 1) : 1;
        decoded.forEach((ch, c) =>
          expect(
            Array.from(ch, (v) => v * scale),
            `${file.name} ch${c}`,
          ).toEqual(file.stored![c]),
        );
      } else {
        // Source: wavefile's own decoding of the sox file (raw codes for PCM, floats for float).
        const wav = new WaveFile(await readFile(file.path));
        const ref = wav.getSamples(false) as unknown as Float64Array[];
        const scale = h.format === "pcm" ? 2 ** (h.bitsPerSample - 1) : 1;
        decoded.forEach((ch, c) =>
          expect(
            Array.from(ch, (v) => v * scale),
            `${file.name} ch${c}`,
          ).toEqual(Array.from(ref[c])),
        );
      }
    }
  });

  it("keeps every bext field (wavefile BWF and Rillbook RF64)", async () => {
    for (const file of corpus.good.filter((f) => f.bext)) {
      const h = await headerOf(file.path);
      const b = file.bext!;
      // Source: the bext fields handed to the generator.
      expect(h.bext, file.name).toEqual({
        description: b.description,
        originator: b.originator,
        originatorReference: b.originatorReference,
        originationDate: b.originationDate,
        originationTime: b.originationTime,
        timeReference: b.timeReference,
        version: 2,
        umid: b.umid,
        loudnessValue: b.loudnessValue,
        loudnessRange: b.loudnessRange,
        maxTruePeakLevel: b.maxTruePeakLevel,
        maxMomentaryLoudness: b.maxMomentaryLoudness,
        maxShortTermLoudness: b.maxShortTermLoudness,
        codingHistory: b.codingHistory,
      });
    }
  });
});

describe("readWavHeader refuses the bad corpus with a specific message", () => {
  it("names what is wrong and where", async () => {
    expect(corpus.bad.length).toBeGreaterThanOrEqual(15);
    for (const file of corpus.bad) {
      const error = await headerOf(file.path).then(
        () => null,
        (e: unknown) => e,
      );
      expect(error, file.name).toBeInstanceOf(WavError);
      const e = error as WavError;
      // Source: the fault planted in the file (tests/support/wav-corpus.ts) and its byte position in the RIFF layout.
      expect(e.message, file.name).toMatch(file.message);
      expect(e.offset, file.name).toBe(file.offset);
    }
  });
});

/** A source that synthesises a file of any size from a header and zeros, counting what is read. */
function syntheticSource(head: Uint8Array, size: number): ByteSource & { bytesRead: number } {
  const s = {
    size,
    bytesRead: 0,
    read(offset: number, length: number) {
      const n = Math.max(0, Math.min(length, size - offset));
      s.bytesRead += n;
      const out = new Uint8Array(n);
      if (offset < head.length) out.set(head.subarray(offset, Math.min(head.length, offset + n)));
      return Promise.resolve(out);
    },
  };
  return s;
}

describe("RF64 over 4 GiB", () => {
  it("takes the data size from ds64 (EBU Tech 3306) and reads only the header", async () => {
    const frames = 1_000_000_000; // 6 GB of 24-bit stereo
    const dataBytes = frames * 6;
    const head = new Uint8Array(12 + 36 + 24 + 8);
    const v = new DataView(head.buffer);
    head.set(new TextEncoder().encode("RF64"), 0);
    v.setUint32(4, 0xffffffff, true);
    head.set(new TextEncoder().encode("WAVEds64"), 8);
    v.setUint32(16, 28, true);
    v.setBigUint64(20, BigInt(head.length - 8 + dataBytes), true);
    v.setBigUint64(28, BigInt(dataBytes), true);
    v.setBigUint64(36, BigInt(frames), true);
    head.set(new TextEncoder().encode("fmt "), 48);
    v.setUint32(52, 16, true);
    v.setUint16(56, 1, true);
    v.setUint16(58, 2, true);
    v.setUint32(60, 96_000, true);
    v.setUint32(64, 96_000 * 6, true);
    v.setUint16(68, 6, true);
    v.setUint16(70, 24, true);
    head.set(new TextEncoder().encode("data"), 72);
    v.setUint32(76, 0xffffffff, true);
    const source = syntheticSource(head, head.length + dataBytes);
    const h = await readWavHeader(source);
    // Source: the sizes written into the ds64 chunk above.
    expect(h.container).toBe("RF64");
    expect(h.dataBytes).toBe(dataBytes);
    expect(h.frames).toBe(frames);
    expect(h.dataOffset).toBe(80);
    expect(h.durationSeconds).toBeCloseTo(frames / 96_000, 9);
    expect(source.bytesRead).toBeLessThan(70 * 1024);
  });

  it("refuses a 0xFFFFFFFF chunk size that ds64 does not resolve", async () => {
    const b = new Uint8Array(await readFile(corpus.good.find((f) => f.expect.container === "RF64")!.path));
    // Overwrite ds64 with a JUNK id: the file still says RF64 but has no 64-bit sizes.
    b.set(new TextEncoder().encode("JUNK"), 12);
    await expect(readWavHeader(bufferSource(b))).rejects.toThrow(
      /RF64 file without its ds64 chunk: found "JUNK" at byte offset 12/,
    );
  });
});
