/**
 * The renderer against sox's `fir` effect running the same RIAA taps on the
 * same input (SoX 14.4.2, single-threaded, 32-bit float output).
 *
 * Alignment: sox's fir effect (its FFT "dft_filter") removes (n − 1)/2 samples
 * of delay from an n-tap filter — the delay of a linear-phase FIR — and pads
 * the end so its output keeps the input's length (observed with SoX 14.4.2).
 * The render filter's delay is `delaySamples` D instead. Prepending
 * n − 1 − 2D zeros to the taps makes sox's removed delay equal to the shift
 * the zeros add plus D, so sox's output is then the same aligned signal
 * z[k] = y[k + D] as Rillbook's, over the whole file, including both ends.
 */
import { execFile } from "node:child_process";
import { mkdtemp, readFile, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import { BwfWriter, openFileSource, readWavHeader, renderAccessCopy } from "@/lib/audio";
import { designRenderFilter, RIAA_SPEC } from "@/lib/curves";
import { testRandom } from "../support/wav-corpus";

const run = promisify(execFile);
let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "rillbook-soxfir-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe("renderAccessCopy vs sox fir", () => {
  for (const fs of [44_100, 96_000]) {
    it(`${fs} Hz stereo noise + tones: same output within 1e-5`, async () => {
      const filter = designRenderFilter(RIAA_SPEC, fs);
      const frames = Math.round(fs * 1.5) + 123;
      const rand = testRandom(fs + 1);
      // Low level so sox's internal 32-bit integer samples cannot clip after +19 dB of bass gain.
      const x = [0, 1].map((c) =>
        Float64Array.from(
          { length: frames },
          (_, t) =>
            0.02 * rand() +
            0.01 * Math.sin((2 * Math.PI * (50 + 950 * c) * t) / fs) +
            0.005 * Math.sin((2 * Math.PI * 15_000 * t) / fs),
        ),
      );
      const input = join(dir, `in-${fs}.wav`);
      const ours = join(dir, `ours-${fs}.wav`);
      const theirs = join(dir, `sox-${fs}.wav`);
      const tapsFile = join(dir, `taps-${fs}.txt`);
      const w = await BwfWriter.create(input, {
        sampleRateHz: fs,
        channels: 2,
        encoding: { format: "float", bitsPerSample: 32 },
      });
      await w.write(x);
      await w.close();

      const source = await openFileSource(input);
      const header = await readWavHeader(source);
      const result = await renderAccessCopy({
        source,
        header,
        filter,
        outputPath: ours,
        output: { format: "float", bitsPerSample: 32 },
      });
      await source.close();
      expect(result.trimDb).toBe(0);

      const lead = filter.taps.length - 1 - 2 * filter.delaySamples;
      expect(lead).toBeGreaterThanOrEqual(0);
      const lines = [
        ...new Array<string>(lead).fill("0"),
        ...Array.from(filter.taps, (t) => t.toPrecision(17)),
      ];
      await writeFile(tapsFile, `${lines.join("\n")}\n`);
      await run("sox", [
        "--single-threaded",
        input,
        "-b",
        "32",
        "-e",
        "floating-point",
        theirs,
        "fir",
        tapsFile,
      ]);

      // Source: sox's output, decoded by wavefile; ours decoded by wavefile too.
      const a = new WaveFile(await readFile(ours)).getSamples(false) as unknown as Float64Array[];
      const b = new WaveFile(await readFile(theirs)).getSamples(false) as unknown as Float64Array[];
      expect(b[0].length).toBe(frames);
      expect(a[0].length).toBe(frames);
      let worst = 0;
      let peak = 0;
      for (let c = 0; c < 2; c++) {
        for (let t = 0; t < frames; t++) {
          worst = Math.max(worst, Math.abs(a[c][t] - b[c][t]));
          peak = Math.max(peak, Math.abs(b[c][t]));
        }
      }
      expect(peak).toBeGreaterThan(0.05);
      expect(worst).toBeLessThanOrEqual(1e-5);
      console.log(
        `sox fir vs Rillbook @ ${fs} Hz: max |difference| ${worst.toExponential(2)} (peak ` +
          `${peak.toFixed(3)}), ${frames} frames × 2, ${filter.taps.length} taps, delay ${filter.delaySamples}`,
      );
    });
  }
});
