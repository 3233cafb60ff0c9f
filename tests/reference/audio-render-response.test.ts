/**
 * The access-copy render measured end to end: a 20-tone multitone (log-spaced
 * 20 Hz–20 kHz) is written as a flat transfer, rendered through the RIAA
 * render filter by renderAccessCopy (24-bit output, dithered, trimmed), and the
 * transfer function output/input at each tone is measured by numpy's FFT in
 * python3 (files read by scipy.io.wavfile). With the reported trim removed it
 * must equal the analog RIAA curve (lib/curves analogResponse, itself checked
 * against scipy.signal.freqs in curves-scipy.test.ts) within 0.005 dB and 0.5°.
 *
 * Tones sit on exact FFT bins of an N-sample window (coherent sampling), and
 * the window starts after the filter has filled, so no window function is
 * needed and the ratio at each bin is the filter's response there.
 */
import { execFile } from "node:child_process";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BwfWriter, openFileSource, readWavHeader, renderAccessCopy } from "@/lib/audio";
import { analogModel, analogResponse, designRenderFilter, RIAA_SPEC } from "@/lib/curves";
import { findPython } from "../support/python";
import { testRandom } from "../support/wav-corpus";

const run = promisify(execFile);
let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "rillbook-multitone-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const MEASURE = String.raw`
import json, sys, warnings
import numpy as np
from scipy.io import wavfile
warnings.simplefilter('ignore')  # wavfile warns about the bext and JUNK chunks it skips
args = json.loads(sys.argv[1])
def load(p):
    rate, d = wavfile.read(p)
    # scipy returns 24-bit PCM left-justified in int32, so full scale is the integer type's range.
    scale = 2.0 ** (8 * d.dtype.itemsize - 1) if d.dtype.kind == 'i' else 1.0
    d = d.astype(np.float64) / scale
    return rate, d.reshape(len(d), -1)
_, x = load(args['input'])
_, y = load(args['output'])
s, n = args['start'], args['n']
out = []
for c in range(x.shape[1]):
    X = np.fft.rfft(x[s:s + n, c])
    Y = np.fft.rfft(y[s:s + n, c])
    H = Y[args['bins']] / X[args['bins']]
    out.append({'db': (20 * np.log10(np.abs(H))).tolist(), 'deg': np.degrees(np.angle(H)).tolist()})
print(json.dumps({'frames': [len(x), len(y)], 'channels': out}))
`;

describe("RIAA render of a multitone against the analog curve (numpy FFT)", () => {
  for (const fs of [44_100, 96_000]) {
    it(`${fs} Hz: level within 0.005 dB and phase within 0.5° at each of 20 tones`, async () => {
      const filter = designRenderFilter(RIAA_SPEC, fs);
      const n = 1 << 17;
      const bins = Array.from({ length: 20 }, (_, i) => Math.round((20 * 1000 ** (i / 19) * n) / fs));
      expect(new Set(bins).size).toBe(20);
      const hz = bins.map((k) => (k * fs) / n);
      const start = filter.taps.length;
      const frames = start + n + filter.delaySamples + 100;
      const rand = testRandom(fs);
      const phases = [bins.map(() => 2 * Math.PI * rand()), bins.map(() => 2 * Math.PI * rand())];
      const x = phases.map((ph) => {
        const ch = new Float64Array(frames);
        bins.forEach((k, i) => {
          for (let t = 0; t < frames; t++)
            ch[t] += 0.045 * Math.cos((2 * Math.PI * ((k * t) % n)) / n + ph[i]);
        });
        return ch;
      });
      const input = join(dir, `in-${fs}.wav`);
      const output = join(dir, `out-${fs}.wav`);
      const w = await BwfWriter.create(input, {
        sampleRateHz: fs,
        channels: 2,
        encoding: { format: "float", bitsPerSample: 32 },
      });
      await w.write(x);
      await w.close();

      const source = await openFileSource(input);
      const header = await readWavHeader(source);
      const result = await renderAccessCopy({ source, header, filter, outputPath: output });
      await source.close();
      expect(result.frames).toBe(frames);
      expect(result.trimDb).toBeLessThan(0); // +19 dB of bass gain on a 0.9-peak multitone must be trimmed
      expect(result.clippedSamples).toBe(0);

      const python = await findPython();
      const { stdout } = await run(
        python,
        ["-c", MEASURE, JSON.stringify({ input, output, start, n, bins })],
        { maxBuffer: 1 << 24 },
      );
      const measured = JSON.parse(stdout) as {
        frames: number[];
        channels: { db: number[]; deg: number[] }[];
      };
      expect(measured.frames).toEqual([frames, frames]);

      // Source: the analog RIAA curve (lib/curves analogResponse; checked against scipy.signal.freqs elsewhere).
      const analog = analogResponse(analogModel(RIAA_SPEC), hz);
      let worstDb = 0;
      let worstDeg = 0;
      for (const ch of measured.channels) {
        hz.forEach((f, i) => {
          const errDb = ch.db[i] - result.trimDb - analog.gainDb[i];
          let errDeg = ch.deg[i] - analog.phaseDeg[i];
          errDeg -= 360 * Math.round(errDeg / 360);
          expect(Math.abs(errDb), `${f.toFixed(1)} Hz level`).toBeLessThanOrEqual(0.005);
          expect(Math.abs(errDeg), `${f.toFixed(1)} Hz phase`).toBeLessThanOrEqual(0.5);
          worstDb = Math.max(worstDb, Math.abs(errDb));
          worstDeg = Math.max(worstDeg, Math.abs(errDeg));
        });
      }
      console.log(
        `multitone RIAA @ ${fs} Hz: worst ${worstDb.toExponential(2)} dB, ${worstDeg.toExponential(2)}° ` +
          `over 20 tones × 2 channels; trim ${result.trimDb.toFixed(3)} dB`,
      );
    });
  }
});
