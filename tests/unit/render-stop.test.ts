// A render asked to stop between blocks (the worker's onProgress throws when its lease is
// lost: the engineer cancelled it): the render ends with that error and leaves no file,
// neither the access copy nor the working file of a trim, whichever pass it was in.
import { mkdtemp, readdir, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BwfWriter, openFileSource, readWavHeader, renderAccessCopy } from "@/lib/audio";
import { testSignal } from "../support/wav-corpus";

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "rillbook-render-stop-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

class Stop extends Error {}

/** Ten seconds of noise at `peak`, float, mono: a 1.5× gain filter needs a trim when the peak is high. */
async function input(name: string, peak: number): Promise<string> {
  const path = join(dir, name);
  const w = await BwfWriter.create(path, {
    sampleRateHz: 48_000,
    channels: 1,
    encoding: { format: "float", bitsPerSample: 32 },
  });
  const [x] = testSignal(480_000, 1, 3, peak);
  await w.write([Float64Array.from(Float32Array.from(x))]);
  await w.close();
  return path;
}

async function renderStoppedAt(
  inputPath: string,
  outName: string,
  stopAt: number,
  keepFiltered: "auto" | "memory" = "auto",
) {
  const source = await openFileSource(inputPath);
  let last = 0;
  try {
    const header = await readWavHeader(source);
    const run = renderAccessCopy({
      source,
      header,
      filter: { taps: [1.5], delaySamples: 0 },
      outputPath: join(dir, outName),
      chunkFrames: 4096,
      keepFiltered,
      onProgress: (fraction) => {
        last = fraction;
        if (fraction >= stopAt) throw new Stop("lease lost");
      },
    });
    await expect(run).rejects.toBeInstanceOf(Stop);
  } finally {
    await source.close();
  }
  return last;
}

describe("a render stopped between blocks", () => {
  it("ends in one pass with the error its progress callback threw, and removes its output", async () => {
    const at = await renderStoppedAt(await input("quiet.wav", 0.3), "quiet-out.wav", 0.3);
    expect(at).toBeGreaterThanOrEqual(0.3);
    expect(at).toBeLessThan(0.5);
    expect((await readdir(dir)).filter((n) => n.startsWith("quiet-out"))).toEqual([]);
  });

  it("ends in the trim's second pass too, removing the output and the kept filtered samples", async () => {
    // Past the half the second pass runs (two passes planned): the peak 0.9 × 1.5 needs a trim.
    const at = await renderStoppedAt(await input("loud.wav", 0.9), "loud-out.wav", 0.75);
    expect(at).toBeGreaterThanOrEqual(0.75);
    expect(at).toBeLessThan(1);
    expect((await readdir(dir)).filter((n) => n.startsWith("loud-out"))).toEqual([]);
  });

  it("ends in the trim's first pass too, the signal kept so far on disk or in memory, and leaves no file", async () => {
    const loud = await input("loud-first.wav", 0.9);
    for (const keepFiltered of ["auto", "memory"] as const) {
      const at = await renderStoppedAt(loud, `first-${keepFiltered}-out.wav`, 0.3, keepFiltered);
      expect(at).toBeGreaterThanOrEqual(0.3);
      expect(at).toBeLessThan(0.5);
      expect((await readdir(dir)).filter((n) => n.startsWith(`first-${keepFiltered}-out`))).toEqual([]);
    }
  });
});
