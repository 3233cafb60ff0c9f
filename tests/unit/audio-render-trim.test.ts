// A render that needs a trim writes the very bytes it wrote before its passes were split
// and the filtered signal kept: the same as one filtering, one measured trim and one
// dithered write, whichever way pass 2 gets its samples and whichever engine runs.
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
 * peak, trim to the ceiling (24-bit: full scale less 2 LSB), dither and write in one go.
 */
async function definitionSamples(input: string, dsp: DspEngine): Promise<string> {
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
  const limit = 1 - 2 * 2 ** -23;
  const gain = peak > limit ? limit / peak : 1;
  const path = join(dir, `definition-${Math.random().toString(36).slice(2)}.wav`);
  const w = await BwfWriter.create(path, {
    sampleRateHz: 48_000,
    channels: 2,
    encoding: { format: "pcm", bitsPerSample: 24 },
    ditherSeed: 7,
    dsp,
  });
  await w.writeInterleaved(aligned, header.frames, gain);
  await w.close();
  return samplesHash(new Uint8Array(await readFile(path)));
}

// SHA-256 of the samples the render wrote before its passes were split (captured from it with
// both engines, which agree), for renders at 0 dB and with a trim from the start or part-way.
const BEFORE = {
  fits: "ed674b0d39f0d931177ec5316678213f492f385ca179abc03dcbe46497aa248f",
  loudThroughout: "86f2b41d2b178e44776e772862f604b565238ab5fff86d478b8a8e462937b009",
  loudLate: "d549fb6860d52fc8ca8353e1c2c6611e3c4553308015057a65da8acaa86b4fea",
};

const engines: [string, DspEngine | null][] = [
  ["JavaScript", jsDsp],
  ["native", nativeDsp()],
];

describe.each(engines)("a render that needs a trim (%s engine)", (_name, dsp) => {
  it.skipIf(dsp === null)(
    "writes the samples it wrote before, in one pass or two, kept or filtered again, and as the definition gives",
    async () => {
      const engine = dsp!;
      const cases: [keyof typeof BEFORE, (i: number) => number][] = [
        ["fits", () => 1],
        ["loudThroughout", () => 4],
        ["loudLate", (i) => (i < 4000 ? 0.5 : 4)],
      ];
      for (const [name, level] of cases) {
        const input = await writeInput(`${name}.wav`, level);
        const want = await definitionSamples(input, engine);
        for (const keepFiltered of ["auto", "never"] as const) {
          for (const chunkFrames of [1000, 4096]) {
            const { result, bytes } = await render(input, `${name}-${keepFiltered}-${chunkFrames}.wav`, {
              keepFiltered,
              chunkFrames,
              dsp: engine,
            });
            const got = await samplesHash(bytes);
            expect({ name, keepFiltered, chunkFrames, got }).toEqual({
              name,
              keepFiltered,
              chunkFrames,
              got: BEFORE[name],
            });
            expect(got).toBe(want);
            expect(result.clippedSamples).toBe(0);
            if (name === "fits") expect(result.secondPass).toBeNull();
            else if (keepFiltered === "never")
              expect(result.secondPass).toEqual({ filteredFrames: frames, readBackFrames: 0 });
            else expect(result.secondPass!.readBackFrames).toBeGreaterThan(0);
            if (name === "loudThroughout" && keepFiltered === "auto")
              expect(result.secondPass).toEqual({ filteredFrames: 0, readBackFrames: frames });
          }
        }
      }
      // The working files are gone.
      expect((await readdir(dir)).filter((f) => f.endsWith(".filtered"))).toEqual([]);
    },
    60_000, // twelve renders; on a machine shared with other work they take their time
  );
});
