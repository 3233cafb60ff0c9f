/**
 * An access copy at another rate than the transfer: a 20-tone multitone at 96 kHz is
 * rendered through the RIAA render filter and resampled to 48 kHz (libsamplerate's best
 * sinc converter). Measured by numpy's FFT in python3 (scipy.io.wavfile reads both
 * files): at each tone the output/input ratio, with the trim removed, must equal the
 * analog RIAA curve (lib/curves analogResponse, itself checked against
 * scipy.signal.freqs) within 0.005 dB and 0.5°, which also proves the output lines up
 * in time with the transfer. Tones sit on exact bins of both windows: bin k of 2^16
 * samples at 48 kHz is bin k of 2^17 samples at 96 kHz.
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
  dir = await mkdtemp(join(tmpdir(), "rillbook-resample-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const MEASURE = String.raw`
import json, sys, warnings
import numpy as np
from scipy.io import wavfile
warnings.simplefilter('ignore')
a = json.loads(sys.argv[1])
def load(p):
    rate, d = wavfile.read(p)
    scale = 2.0 ** (8 * d.dtype.itemsize - 1) if d.dtype.kind == 'i' else 1.0
    return rate, (d.astype(np.float64) / scale).reshape(len(d), -1)
rx, x = load(a['input'])
ry, y = load(a['output'])
X = np.fft.rfft(x[a['startIn']:a['startIn'] + a['nIn'], 0])[a['bins']] / a['nIn']
Y = np.fft.rfft(y[a['startOut']:a['startOut'] + a['nOut'], 0])[a['bins']] / a['nOut']
H = Y / X
print(json.dumps({'rates': [int(rx), int(ry)], 'frames': [len(x), len(y)], 'db': (20 * np.log10(np.abs(H))).tolist(), 'deg': np.degrees(np.angle(H)).tolist()}))
`;

describe("an access copy resampled from 96 kHz to 48 kHz", () => {
  it("keeps the analog RIAA response within 0.005 dB and 0.5° at 20 tones, and the transfer's timing", async () => {
    const fsIn = 96_000;
    const fsOut = 48_000;
    const filter = designRenderFilter(RIAA_SPEC, fsIn);
    const nOut = 1 << 16;
    const nIn = 2 * nOut;
    const bins = Array.from({ length: 20 }, (_, i) => Math.round((20 * 1000 ** (i / 19) * nOut) / fsOut));
    expect(new Set(bins).size).toBe(20);
    const hz = bins.map((k) => (k * fsOut) / nOut);
    const startOut = 8192;
    const startIn = 2 * startOut;
    const frames = startIn + nIn + 2 * 8192;
    const rand = testRandom(17);
    const phases = bins.map(() => 2 * Math.PI * rand());
    const x = new Float64Array(frames);
    bins.forEach((k, i) => {
      for (let t = 0; t < frames; t++)
        x[t] += 0.045 * Math.cos((2 * Math.PI * ((k * t) % nIn)) / nIn + phases[i]);
    });
    const input = join(dir, "in.wav");
    const output = join(dir, "out.wav");
    const w = await BwfWriter.create(input, {
      sampleRateHz: fsIn,
      channels: 1,
      encoding: { format: "float", bitsPerSample: 32 },
    });
    await w.write([x]);
    await w.close();

    const source = await openFileSource(input);
    const header = await readWavHeader(source);
    const result = await renderAccessCopy({
      source,
      header,
      filter,
      outputPath: output,
      outputSampleRateHz: fsOut,
    });
    await source.close();
    expect(result.frames).toBe(frames / 2);
    expect(result.clippedSamples).toBe(0);
    expect(result.codingHistory).toMatch(/F=48000/);

    const python = await findPython();
    const { stdout } = await run(
      python,
      ["-c", MEASURE, JSON.stringify({ input, output, startIn, nIn, startOut, nOut, bins })],
      { maxBuffer: 1 << 24 },
    );
    const m = JSON.parse(stdout) as { rates: number[]; frames: number[]; db: number[]; deg: number[] };
    expect(m.rates).toEqual([fsIn, fsOut]);
    // Source: the analog RIAA curve (lib/curves analogResponse; checked against scipy.signal.freqs elsewhere).
    const analog = analogResponse(analogModel(RIAA_SPEC), hz);
    let worstDb = 0;
    let worstDeg = 0;
    hz.forEach((f, i) => {
      const errDb = m.db[i] - result.trimDb - analog.gainDb[i];
      let errDeg = m.deg[i] - analog.phaseDeg[i];
      errDeg -= 360 * Math.round(errDeg / 360);
      expect(Math.abs(errDb), `${f.toFixed(1)} Hz level`).toBeLessThanOrEqual(0.005);
      expect(Math.abs(errDeg), `${f.toFixed(1)} Hz phase`).toBeLessThanOrEqual(0.5);
      worstDb = Math.max(worstDb, Math.abs(errDb));
      worstDeg = Math.max(worstDeg, Math.abs(errDeg));
    });
    console.log(
      `resampled 96→48 kHz: worst ${worstDb.toExponential(2)} dB, ${worstDeg.toExponential(2)}° over 20 tones`,
    );
  });
});
