import { createHash } from "node:crypto";
import { mkdtemp, readdir, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import {
  BwfWriter,
  decodeFrames,
  openFileSource,
  parseCodingHistory,
  readWavHeader,
  renderAccessCopy,
  RenderError,
} from "@/lib/audio";
import type { ChannelMode, RenderOptions } from "@/lib/audio";
import { testRandom, testSignal } from "../support/wav-corpus";

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "rillbook-render-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** Definition of the aligned FIR output: z[n] = Σₖ h[k]·x[n + D − k], x = 0 outside the signal. */
function alignedFir(x: Float64Array, h: Float64Array, delay: number): Float64Array {
  const z = new Float64Array(x.length);
  for (let n = 0; n < x.length; n++) {
    let s = 0;
    for (let k = 0; k < h.length; k++) {
      const i = n + delay - k;
      if (i >= 0 && i < x.length) s += h[k] * x[i];
    }
    z[n] = s;
  }
  return z;
}

async function writeInput(name: string, values: Float64Array[], rate = 48_000): Promise<string> {
  const path = join(dir, name);
  const w = await BwfWriter.create(path, {
    sampleRateHz: rate,
    channels: values.length as 1 | 2,
    encoding: { format: "float", bitsPerSample: 32 },
  });
  await w.write(values.map((v) => Float64Array.from(Float32Array.from(v))));
  await w.close();
  return path;
}

async function render(
  input: string,
  output: string,
  extra: Partial<RenderOptions> & Pick<RenderOptions, "filter">,
) {
  const source = await openFileSource(input);
  try {
    const header = await readWavHeader(source);
    return await renderAccessCopy({ source, header, outputPath: output, ...extra });
  } finally {
    await source.close();
  }
}

async function readOutput(path: string): Promise<Float64Array[]> {
  // Source: wavefile (npm) decodes the access copy independently.
  const wav = new WaveFile(await readFile(path));
  const bits = Number((wav.fmt as { bitsPerSample: number }).bitsPerSample);
  const isFloat = (wav.fmt as { audioFormat: number }).audioFormat === 3;
  const got = wav.getSamples(false) as unknown as Float64Array[] | Float64Array;
  const chans = Array.isArray(got) ? got : [got];
  const scale = isFloat ? 1 : 2 ** (bits - 1);
  return chans.map((c) => Float64Array.from(c, (v) => v / scale));
}

const rand = testRandom(77);
const taps = Float64Array.from(
  { length: 301 },
  (_, k) => (k === 40 ? 1 : 0) + 0.05 * rand() * Math.exp(-k / 60),
);
const filter = { taps, delaySamples: 40 };

describe("renderAccessCopy", () => {
  const frames = 5000;
  const x = testSignal(frames, 2, 31, 0.3).map((v) => Float64Array.from(Float32Array.from(v)));
  let input: string;
  beforeAll(async () => {
    input = await writeInput("in.wav", x);
  });

  const modes: [ChannelMode, (l: number, r: number) => number][] = [
    ["sum", (l, r) => (l + r) / 2],
    ["difference", (l, r) => (l - r) / 2],
    ["left", (l) => l],
    ["right", (_l, r) => r],
  ];
  it("lines up sample for sample with the input and keeps its length (both channels, float out)", async () => {
    const out = join(dir, "both.wav");
    const r = await render(input, out, {
      filter,
      output: { format: "float", bitsPerSample: 32 },
      chunkFrames: 777,
    });
    expect(r.frames).toBe(frames);
    expect(r.trimDb).toBe(0);
    const y = await readOutput(out);
    expect(y.length).toBe(2);
    for (let c = 0; c < 2; c++) {
      const want = alignedFir(x[c], taps, 40);
      expect(y[c].length).toBe(frames);
      let worst = 0;
      for (let n = 0; n < frames; n++) worst = Math.max(worst, Math.abs(y[c][n] - want[n]));
      expect(worst).toBeLessThan(1e-7); // float32 output resolution at this level
    }
  });

  it.each(modes)("channel mode %s", async (mode, f) => {
    const out = join(dir, `${mode}.wav`);
    const r = await render(input, out, {
      filter,
      channelMode: mode,
      output: { format: "float", bitsPerSample: 32 },
    });
    expect(r.channels).toBe(1);
    const y = await readOutput(out);
    expect(y.length).toBe(1);
    const mixed = Float64Array.from(x[0], (l, i) => f(l, x[1][i]));
    const want = alignedFir(mixed, taps, 40);
    let worst = 0;
    for (let n = 0; n < frames; n++) worst = Math.max(worst, Math.abs(y[0][n] - want[n]));
    expect(worst).toBeLessThan(1e-7);
    expect(parseCodingHistory(r.codingHistory).at(-1)?.mode).toBe("mono");
  });

  it("trims a loud render to the largest gain that keeps it under the ceiling, so nothing clips", async () => {
    const loud = [Float64Array.from(x[0], (v) => v * 3.3), Float64Array.from(x[1], (v) => v * 3.3)].map((v) =>
      Float64Array.from(Float32Array.from(v)),
    );
    const loudInput = await writeInput("loud.wav", loud);
    for (const ceilingDbfs of [0, -1]) {
      const out = join(dir, `loud${ceilingDbfs}.wav`);
      const r = await render(loudInput, out, { filter, ceilingDbfs });
      const filtered = loud.map((v) => alignedFir(v, taps, 40));
      const peak = Math.max(...filtered.map((v) => Math.max(...Array.from(v, Math.abs))));
      expect(peak).toBeGreaterThan(1); // the test must need a trim
      expect(r.peakDbfs).toBeCloseTo(20 * Math.log10(peak), 9);
      // 24-bit: the ceiling less 2 LSB of room for dither and rounding.
      const limit = 10 ** (ceilingDbfs / 20) * (1 - 2 * 2 ** -23);
      expect(r.trimDb).toBeCloseTo(20 * Math.log10(limit / peak), 9);
      expect(r.clippedSamples).toBe(0);
      const y = await readOutput(out);
      const g = 10 ** (r.trimDb / 20);
      let worst = 0;
      let outPeak = 0;
      for (let c = 0; c < 2; c++) {
        for (let n = 0; n < frames; n++) {
          worst = Math.max(worst, Math.abs(y[c][n] - g * filtered[c][n]));
          outPeak = Math.max(outPeak, Math.abs(y[c][n]));
        }
      }
      // Dither < 1 LSB plus rounding ≤ ½ LSB, plus ≤ ½ LSB because a trimmed 24-bit copy scales the
      // filtered signal rounded to float32 (relative error ≤ 2^-24 of a value under full scale).
      expect(worst * 2 ** 23).toBeLessThan(2);
      expect(outPeak).toBeLessThanOrEqual(10 ** (ceilingDbfs / 20));
      expect(outPeak).toBeGreaterThan(10 ** (ceilingDbfs / 20) * 0.999);
    }
  });

  it("needing a trim, writes the same bytes whether pass 2 reads the kept signal back or filters it all again", async () => {
    // Quiet for the first 3000 frames, loud after: the peak passes the ceiling part-way through, so
    // pass 2 filters the first part again and takes the rest as pass 1 kept it.
    const late = x.map((v) =>
      Float64Array.from(Float32Array.from(v, (s, i) => (i < 3000 ? 0.2 * s : 10 * s))),
    );
    const lateInput = await writeInput("late-loud.wav", late);
    const runs: { name: string; r: Awaited<ReturnType<typeof render>>; bytes: Buffer }[] = [];
    for (const keepFiltered of ["auto", "never"] as const) {
      for (const chunkFrames of [700, 4096]) {
        const name = `late-${keepFiltered}-${chunkFrames}.wav`;
        const seen: number[] = [];
        const r = await render(lateInput, join(dir, name), {
          filter,
          keepFiltered,
          chunkFrames,
          onProgress: (f) => seen.push(f),
        });
        runs.push({ name, r, bytes: await readFile(join(dir, name)) });
        // Progress over two passes still only goes forward, and ends at 1.
        for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeGreaterThan(seen[i - 1]);
        expect(seen.at(-1)).toBe(1);
      }
    }
    for (const { r } of runs) {
      expect(r.trimDb).toBeLessThan(-6);
      expect(r.clippedSamples).toBe(0);
    }
    // Kept from the chunk where the peak passed: after frame 2960 (the filter's 40-sample delay), before 3000.
    const kept = runs[0].r.secondPass!;
    expect(kept.readBackFrames).toBeGreaterThan(0);
    expect(kept.filteredFrames).toBeGreaterThan(0);
    expect(kept.filteredFrames).toBeLessThanOrEqual(2960);
    expect((kept.filteredFrames + 40) % 700).toBe(0); // chunk boundaries of the output, 40 frames behind the input's
    expect(kept.filteredFrames + kept.readBackFrames).toBe(frames);
    expect(kept.fromFileFrames).toBe(kept.readBackFrames); // in the working file: the disk has room
    expect(runs[2].r.secondPass).toEqual({ filteredFrames: frames, readBackFrames: 0, fromFileFrames: 0 });
    for (const run of runs.slice(1)) {
      expect(run.r.sha256).toBe(runs[0].r.sha256);
      expect(run.bytes.equals(runs[0].bytes)).toBe(true);
    }
    // Source: node:crypto over the file on disk.
    expect(runs[0].r.sha256).toBe(createHash("sha256").update(runs[0].bytes).digest("hex"));
    // The working files are gone.
    expect((await readdir(dir)).filter((f) => f.endsWith(".filtered"))).toEqual([]);
  });

  it("writes in one pass when the signal fits under the ceiling", async () => {
    const r = await render(input, join(dir, "fits.wav"), { filter });
    expect(r.trimDb).toBe(0);
    expect(r.secondPass).toBeNull();
  });

  it("reports progress up to 1, hashes the file it wrote, and writes the same bytes whatever the chunk size", async () => {
    const seen: number[] = [];
    const a = join(dir, "a.wav");
    const b = join(dir, "b.wav");
    const ra = await render(input, a, { filter, onProgress: (f) => seen.push(f), chunkFrames: 1000 });
    const rb = await render(input, b, { filter, chunkFrames: 4096 });
    expect(seen.length).toBeGreaterThanOrEqual(5); // a report per 1000-frame chunk of 5000
    for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeGreaterThanOrEqual(seen[i - 1]);
    expect(seen.at(-1)).toBe(1);
    const bytes = await readFile(a);
    // Source: node:crypto over the file on disk.
    expect(ra.sha256).toBe(createHash("sha256").update(bytes).digest("hex"));
    expect(ra.outputBytes).toBe(bytes.length);
    expect(rb.sha256).toBe(ra.sha256);
  });

  it("records the flat transfer and the equalization in the coding history (EBU R98)", async () => {
    const out = join(dir, "history.wav");
    const r = await render(input, out, {
      filter,
      equalization: {
        curve: "turnover 318 µs, shelf 3180 µs, rolloff 75 µs",
        speedRatio: 1.0125,
        software: "Rillbook 0.1.0",
      },
      bext: { description: "Access copy", originator: "Rillbook" },
    });
    const lines = parseCodingHistory(r.codingHistory);
    expect(lines).toHaveLength(2);
    expect(lines[0]).toEqual({
      algorithm: "PCM",
      samplingHz: 48_000,
      wordLength: 32,
      mode: "stereo",
      text: "flat transfer; IEEE float",
    });
    expect(lines[1]).toMatchObject({ algorithm: "PCM", samplingHz: 48_000, wordLength: 24, mode: "stereo" });
    expect(lines[1].text).toContain(
      "Rillbook 0.1.0; equalization turnover 318 us; shelf 3180 us; rolloff 75 us; speed ratio 1.0125; trim 0.00 dB",
    );
    const source = await openFileSource(out);
    const h = await readWavHeader(source);
    await source.close();
    expect(h.bext?.codingHistory).toBe(r.codingHistory);
    expect(h.bext?.description).toBe("Access copy");
    expect(h.bitsPerSample).toBe(24);
  });

  it("handles a signal shorter than the filter delay", async () => {
    const tiny = [Float64Array.from([0.25, -0.5, 0.125])];
    const path = await writeInput("tiny.wav", tiny);
    const out = join(dir, "tiny-out.wav");
    const r = await render(path, out, { filter, output: { format: "float", bitsPerSample: 32 } });
    expect(r.frames).toBe(3);
    const y = await readOutput(out);
    const want = alignedFir(tiny[0], taps, 40);
    for (let n = 0; n < 3; n++) expect(y[0][n]).toBeCloseTo(want[n], 7);
  });

  it("refuses a lateral sum of a mono transfer", async () => {
    const path = await writeInput("mono.wav", [x[0]]);
    await expect(render(path, join(dir, "never.wav"), { filter, channelMode: "sum" })).rejects.toThrow(
      RenderError,
    );
    await expect(render(path, join(dir, "never.wav"), { filter, channelMode: "sum" })).rejects.toThrow(
      /needs a stereo transfer; this one is mono/,
    );
  });
});

describe("decodeFrames reuse", () => {
  it("decodes into caller buffers without reallocating", () => {
    const buf = [new Float64Array(10)];
    const bytes = new Uint8Array([0, 0x40, 0, 0xc0]);
    const out = decodeFrames(bytes, { format: "pcm", bitsPerSample: 16 }, 1, buf);
    expect(out[0].buffer).toBe(buf[0].buffer);
    expect(Array.from(out[0])).toEqual([0.5, -0.5]);
  });
});
