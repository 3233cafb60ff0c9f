import { mkdtemp, rm, stat } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BwfWriter, openFileSource, readWavHeader, renderAccessCopy, RenderError } from "@/lib/audio";
import type { RenderOptions } from "@/lib/audio";
import { RIAA_SPEC, speedCorrectedSpec } from "@/lib/curves";
import { testSignal } from "../support/wav-corpus";

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "rillbook-speed-unit-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const identity = { taps: [1], delaySamples: 0 };

async function renderWith(extra: Partial<RenderOptions>, frames = 48_000) {
  const input = join(dir, `in-${frames}.wav`);
  const w = await BwfWriter.create(input, {
    sampleRateHz: 48_000,
    channels: 1,
    encoding: { format: "float", bitsPerSample: 32 },
  });
  await w.write(testSignal(frames, 1, 3, 0.3));
  await w.close();
  const source = await openFileSource(input);
  try {
    const header = await readWavHeader(source);
    return await renderAccessCopy({
      source,
      header,
      filter: identity,
      outputPath: join(dir, "out.wav"),
      ...extra,
    });
  } finally {
    await source.close();
  }
}

describe("speed correction in the render", () => {
  it("shortens a transfer at 78 rpm of a disc cut at 80 to 78/80 of its frames, at the transfer's rate", async () => {
    const r = await renderWith({ speedCorrection: { cutSpeedRpm: 80, transferSpeedRpm: 78 } });
    // Source: 48 000 × 78/80 = 46 800.
    expect(r.frames).toBe(46_800);
    expect(r.speedCorrection).toMatchObject({ factor: 80 / 78 });
    expect(r.codingHistory).toMatch(
      /F=48000,W=24,M=mono,T=.*speed corrected from 78 to 80 rpm \(x1\.025641; resampled from 48000 Hz played at 49230\.77 Hz/,
    );
  });

  it("lengthens a disc cut at 70 rpm and transferred at 78 by 78/70, and can write another rate at once", async () => {
    const r = await renderWith({
      speedCorrection: { cutSpeedRpm: 70, transferSpeedRpm: 78 },
      outputSampleRateHz: 44_100,
    });
    // Source: 48 000 × 78/70 × 44 100/48 000 = 49 140.
    expect(r.frames).toBe(49_140);
    expect((await stat(join(dir, "out.wav"))).size).toBeGreaterThan(49_140 * 3);
  });

  it("refuses a curve whose speed ratio is not transfer ÷ cut, and an implausible correction", async () => {
    await expect(
      renderWith({
        speedCorrection: { cutSpeedRpm: 80, transferSpeedRpm: 78 },
        equalization: { curve: "RIAA", speedRatio: 1, software: "test" },
      }),
    ).rejects.toThrow(/speed ratio 1 is not transfer ÷ cut/);
    await expect(
      renderWith({ speedCorrection: { cutSpeedRpm: 33.33, transferSpeedRpm: 78 } }),
    ).rejects.toThrow(RenderError);
  });

  it("moves the reference frequency with the corners, so the corrected copy is levelled at its own 1 kHz", () => {
    const s = speedCorrectedSpec({ ...RIAA_SPEC, speedRatio: 78 / 80 });
    expect(s.reference).toEqual({ hz: 975, db: 0 });
    expect(s.turnover).toEqual(RIAA_SPEC.turnover);
    expect(s.speedRatio).toBe(78 / 80);
  });
});
