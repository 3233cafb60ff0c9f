// A render that needs a trim writes the same bytes whichever way pass 2 gets its samples (kept
// in memory, kept in the working file, both, or filtered again) and whichever engine runs: the
// same as one filtering, one measured trim and one dithered write. The copy at 0 dB writes the
// very bytes it wrote before the passes were split.
import { createHash } from "node:crypto";
import { mkdtemp, readdir, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BwfWriter, bufferSource, openFileSource, readWavHeader, renderAccessCopy } from "@/lib/audio";
import type { RenderOptions } from "@/lib/audio";
import { jsDsp, nativeDsp } from "@/lib/audio/dsp";
import type { DspEngine } from "@/lib/audio/dsp";
import { testRandom, testSignal } from "../support/wav-corpus";

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "rillbook-render-trim-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const rand = testRandom(91);
const taps = Float64Array.from(
  { length: 257 },
  (_, k) => (k === 30 ? 1 : 0) + 0.08 * rand() * Math.exp(-k / 50),
);
const filter = { taps, delaySamples: 30 };
const frames = 6000;
const base = testSignal(frames, 2, 47, 0.3);

/** Float32 stereo input, scaled per frame by `level(i)`. */
async function writeInput(name: string, level: (i: number) => number): Promise<string> {
  const path = join(dir, name);
  const w = await BwfWriter.create(path, {
    sampleRateHz: 48_000,
    channels: 2,
    encoding: { format: "float", bitsPerSample: 32 },
  });
  await w.write(base.map((v) => Float64Array.from(Float32Array.from(v, (s, i) => s * level(i)))));
  await w.close();
  return path;
}

async function render(input: string, name: string, extra: Partial<RenderOptions>) {
  const source = await openFileSource(input);
  try {
    const header = await readWavHeader(source);
    const outputPath = join(dir, name);
    const result = await renderAccessCopy({ source, header, filter, outputPath, ditherSeed: 7, ...extra });
    return { result, bytes: new Uint8Array(await readFile(outputPath)) };
  } finally {
    await source.close();
  }
}

/** SHA-256 of the data chunk only: the samples, whatever the header carries. */
async function samplesHash(file: Uint8Array): Promise<string> {
  const header = await readWavHeader(bufferSource(file));
  const data = file.subarray(header.dataOffset, header.dataOffset + header.frames * header.blockAlign);
  return createHash("sha256").update(data).digest("hex");
}

/**
 * The render as its definition reads, in memory: filter the whole signal once, measure its
 * peak, trim to the ceiling (full scale less 2 LSB), dither and write in one go. With a trim,
 * a 16/24-bit copy scales the filtered signal rounded to float32; a 32-bit one, float64.
 */
async function definitionSamples(
  input: string,
  dsp: DspEngine,
  bitsPerSample = 24,
  round32 = bitsPerSample <= 24,
): Promise<string> {
  const file = new Uint8Array(await readFile(input));
  const header = await readWavHeader(bufferSource(file));
  const decoded = new Float64Array((header.frames + filter.delaySamples) * 2);
  dsp.decode(
    file.subarray(header.dataOffset, header.dataOffset + header.frames * header.blockAlign),
    { format: header.format, bitsPerSample: header.bitsPerSample },
    decoded,
  );
  const filtered = new Float64Array(decoded.length);
  const conv = dsp.filter(taps, 2);
  // Chunks of the render's own size, so the FFT blocks fall where the render's do.
  for (let at = 0; at < header.frames + filter.delaySamples; at += conv.blockSize) {
    const n = Math.min(conv.blockSize, header.frames + filter.delaySamples - at);
    const piece = new Float64Array(n * 2);
    conv.process(decoded.subarray(at * 2, (at + n) * 2), n, piece);
    filtered.set(piece, at * 2);
  }
  const aligned = filtered.subarray(filter.delaySamples * 2);
  const peak = dsp.peak(aligned, header.frames * 2);
  const limit = 1 - 2 * 2 ** -(bitsPerSample - 1);
  const gain = peak > limit ? limit / peak : 1;
  const scaled = gain < 1 && round32 ? Float32Array.from(aligned) : aligned;
  const path = join(dir, `definition-${Math.random().toString(36).slice(2)}.wav`);
  const w = await BwfWriter.create(path, {
    sampleRateHz: 48_000,
    channels: 2,
    encoding: { format: "pcm", bitsPerSample },
    ditherSeed: 7,
    dsp,
  });
  await w.writeInterleaved(scaled, header.frames, gain);
  await w.close();
  return samplesHash(new Uint8Array(await readFile(path)));
}

// SHA-256 of the samples, for renders at 0 dB and with a trim from the start or part-way (both
// engines agree). `fits` is what the render wrote before its passes were split, unchanged. The two
// trimmed ones changed once, on purpose, when a trimmed 16/24-bit copy came to scale the filtered
// signal rounded to float32 (so pass 1 keeps it in memory at 4 bytes a sample; the rounding moves
// a value by at most 2^-24 of it, under half an LSB of 24-bit): before that they were
// 86f2b41d… (loudThroughout) and d549fb68… (loudLate), scaling float64.
const BEFORE = {
  fits: "ed674b0d39f0d931177ec5316678213f492f385ca179abc03dcbe46497aa248f",
  loudThroughout: "a1d1268b1ff93207dde6c0c0d1806913ca7a605f91e2def706c147c2fc0fa64b",
  loudLate: "048857443dd621a5df8cb717708426b51377837d0e3daca14b3239b22fa57f7b",
};

const engines: [string, DspEngine | null][] = [
  ["JavaScript", jsDsp],
  ["native", nativeDsp()],
];

describe.each(engines)("a render that needs a trim (%s engine)", (_name, dsp) => {
  it(
    "writes the samples it wrote before, in one pass or two, kept or filtered again, and as the definition gives",
    async () => {
      // The native engine is built by the test command (scripts/lib/ensure.sh); without it, this fails rather than skips.
      expect(dsp, "the native render engine is not built").not.toBeNull();
      const engine = dsp!;
      const cases: [keyof typeof BEFORE, (i: number) => number][] = [
        ["fits", () => 1],
        ["loudThroughout", () => 4],
        ["loudLate", (i) => (i < 4000 ? 0.5 : 4)],
      ];
      for (const [name, level] of cases) {
        const input = await writeInput(`${name}.wav`, level);
        const want = await definitionSamples(input, engine);
        // Kept in the working file (the default, the disk having room), in memory (the default
        // budget), both (memory for 1500 frames of float32 stereo, the rest on disk), or filtered again.
        const ways = [
          { keepFiltered: "auto", keepInMemoryBytes: undefined },
          { keepFiltered: "memory", keepInMemoryBytes: undefined },
          { keepFiltered: "memory", keepInMemoryBytes: 12_000 },
          { keepFiltered: "never", keepInMemoryBytes: undefined },
        ] as const;
        for (const { keepFiltered, keepInMemoryBytes } of ways) {
          for (const chunkFrames of [1000, 4096]) {
            const way = `${keepFiltered}-${keepInMemoryBytes ?? "default"}-${chunkFrames}`;
            const { result, bytes } = await render(input, `${name}-${way}.wav`, {
              keepFiltered,
              keepInMemoryBytes,
              chunkFrames,
              dsp: engine,
            });
            const got = await samplesHash(bytes);
            expect({ name, way, got }).toEqual({ name, way, got: BEFORE[name] });
            expect(got).toBe(want);
            expect(result.clippedSamples).toBe(0);
            const second = result.secondPass;
            if (name === "fits") expect(second).toBeNull();
            else if (keepFiltered === "never")
              expect(second).toEqual({ filteredFrames: frames, readBackFrames: 0, fromFileFrames: 0 });
            else {
              expect(second!.readBackFrames).toBeGreaterThan(0);
              if (keepFiltered === "auto") expect(second!.fromFileFrames).toBe(second!.readBackFrames);
              else if (keepInMemoryBytes === undefined) expect(second!.fromFileFrames).toBe(0);
              else {
                // Whole chunks in memory while they fit in 12 000 bytes (8 bytes a frame), the rest on
                // disk: with chunks of 1000 frames, the first kept chunk in memory and the others on disk.
                const inMemory = second!.readBackFrames - second!.fromFileFrames;
                expect(inMemory * 8).toBeLessThanOrEqual(12_000);
                if (chunkFrames === 1000)
                  expect([inMemory > 0, second!.fromFileFrames > 0]).toEqual([true, true]);
              }
            }
            if (name === "loudThroughout" && keepFiltered === "auto")
              expect(second).toMatchObject({ filteredFrames: 0, readBackFrames: frames });
          }
        }
      }
      // The working files are gone.
      expect((await readdir(dir)).filter((f) => f.endsWith(".filtered"))).toEqual([]);
    },
    60_000, // twenty-four renders; on a machine shared with other work they take their time
  );

  it("keeps a trimmed 32-bit copy at float64: the same bytes kept in memory, on disk or filtered again", async () => {
    // The native engine is built by the test command (scripts/lib/ensure.sh); without it, this fails rather than skips.
    expect(dsp, "the native render engine is not built").not.toBeNull();
    const engine = dsp!;
    const input = await writeInput("loud32.wav", (i) => (i < 4000 ? 0.5 : 4));
    const want = await definitionSamples(input, engine, 32);
    for (const [keepFiltered, keepInMemoryBytes] of [
      ["auto", undefined],
      ["memory", undefined],
      ["memory", 16_000],
      ["never", undefined],
    ] as const) {
      const { result, bytes } = await render(input, `loud32-${keepFiltered}-${keepInMemoryBytes}.wav`, {
        keepFiltered,
        keepInMemoryBytes,
        chunkFrames: 1000,
        output: { format: "pcm", bitsPerSample: 32 },
        dsp: engine,
      });
      expect(result.trimDb).toBeLessThan(0);
      expect(await samplesHash(bytes)).toBe(want);
    }
    // Rounding to float32 would move these samples by far more than a 32-bit LSB: it is not done.
    expect(await definitionSamples(input, engine, 32, true)).not.toBe(want);
  }, 30_000);
});
