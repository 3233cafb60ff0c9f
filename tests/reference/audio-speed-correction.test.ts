/**
 * Speed correction: a disc cut at 80 rpm and transferred at 78 rpm plays too slow, by 78/80.
 * The render corrects it by resampling the transfer by cut ÷ transfer (libsamplerate's best
 * sinc converter, the access copy's own resampler), so pitch rises and the copy is 78/80 as
 * long. Measured by numpy/scipy in python3 on the rendered files:
 *
 * - a 1 kHz tone in the transfer comes out at 1000 × 80/78 = 1025.641 Hz within 0.01 %
 *   (numpy FFT of 2^17 samples with a Hann window, zero-padded 16 times, refined by
 *   scipy.optimize.curve_fit, a least-squares sine fit);
 * - a 20-tone multitone rendered through the RIAA curve with the speed ratio 78/80, then
 *   corrected: at each tone the copy/transfer ratio (trim removed) equals the analog RIAA
 *   curve at the cut speed (speed ratio 1, levelled at 1 kHz of the copy) within the render
 *   filter's targets, 0.005 dB and 0.5°, as the render and resample reference tests require.
 *   Tones sit on exact bins of both windows: the copy's window is 39·2^11 samples, the
 *   transfer's 40·2^11, the same stretch of the recording once played at the cut speed.
 */
import { execFile } from "node:child_process";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BwfWriter, openFileSource, readWavHeader, renderAccessCopy } from "@/lib/audio";
import { analogModel, analogResponse, designRenderFilter, RIAA_SPEC, speedCorrectedSpec } from "@/lib/curves";
import { findPython } from "../support/python";
import { testRandom } from "../support/wav-corpus";

const run = promisify(execFile);
const FS = 48_000;
const CUT = 80;
const TRANSFER = 78;
/** The curve as a choice records it for this disc: corners where the transfer has them. */
const CHOSEN = { ...RIAA_SPEC, speedRatio: TRANSFER / CUT };

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "rillbook-speed-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

async function writeTransfer(path: string, x: Float64Array): Promise<void> {
  const w = await BwfWriter.create(path, {
    sampleRateHz: FS,
    channels: 1,
    encoding: { format: "float", bitsPerSample: 32 },
  });
  await w.write([x]);
  await w.close();
}

/** Renders `input` with the chosen curve and speed correction 78 → 80 rpm. */
async function renderCorrected(input: string, output: string) {
  const source = await openFileSource(input);
  try {
    const header = await readWavHeader(source);
    const filter = designRenderFilter(speedCorrectedSpec(CHOSEN), FS);
    return await renderAccessCopy({
      source,
      header,
      filter,
      outputPath: output,
      output: { format: "float", bitsPerSample: 32 },
      speedCorrection: { cutSpeedRpm: CUT, transferSpeedRpm: TRANSFER },
      equalization: { curve: "RIAA", speedRatio: CHOSEN.speedRatio, software: "Rillbook test" },
    });
  } finally {
    await source.close();
  }
}

const LOAD = String.raw`
import json, sys, warnings
import numpy as np
from scipy.io import wavfile
from scipy.optimize import curve_fit
warnings.simplefilter('ignore')
a = json.loads(sys.argv[1])
def load(p):
    rate, d = wavfile.read(p)
    scale = 2.0 ** (8 * d.dtype.itemsize - 1) if d.dtype.kind == 'i' else 1.0
    return int(rate), (d.astype(np.float64) / scale).reshape(len(d), -1)[:, 0]
`;

const PITCH =
  LOAD +
  String.raw`
rate, y = load(a['output'])
n = a['n']
seg = y[a['start']:a['start'] + n]
pad = 16
spec = np.abs(np.fft.rfft(seg * np.hanning(n), pad * n))
k = int(np.argmax(spec[1:])) + 1
l, c, r = np.log(spec[k - 1:k + 2])
f0 = (k + 0.5 * (l - r) / (l - 2 * c + r)) * rate / (pad * n)
t = np.arange(n) / rate
model = lambda t, f, A, B: A * np.cos(2 * np.pi * f * t) + B * np.sin(2 * np.pi * f * t)
(f1, A, B), _ = curve_fit(model, t, seg, p0=[f0, 0.5, 0.0])
print(json.dumps({'rate': rate, 'frames': len(y), 'fftHz': f0, 'fitHz': f1}))
`;

const RESPONSE =
  LOAD +
  String.raw`
_, x = load(a['input'])
rate, y = load(a['output'])
X = np.fft.rfft(x[a['startIn']:a['startIn'] + a['nIn']])[a['bins']] / a['nIn']
Y = np.fft.rfft(y[a['startOut']:a['startOut'] + a['nOut']])[a['bins']] / a['nOut']
H = Y / X
print(json.dumps({'rate': rate, 'frames': len(y), 'db': (20 * np.log10(np.abs(H))).tolist(), 'deg': np.degrees(np.angle(H)).tolist()}))
`;

describe("a transfer at 78 rpm of a disc cut at 80 rpm, speed corrected", () => {
  it("plays a 1 kHz tone of the transfer at 80/78 kHz (1025.641 Hz) within 0.01 %, 78/80 as long", async () => {
    const frames = 4 * FS;
    const x = new Float64Array(frames);
    for (let t = 0; t < frames; t++) x[t] = 0.5 * Math.sin((2 * Math.PI * 1000 * t) / FS);
    const input = join(dir, "tone.wav");
    const output = join(dir, "tone-corrected.wav");
    await writeTransfer(input, x);
    const result = await renderCorrected(input, output);
    // Source: 4 s × 48 000 frames × 78/80 = 187 200 frames.
    expect(result.frames).toBe(187_200);
    expect(result.speedCorrection).toMatchObject({ cutSpeedRpm: 80, transferSpeedRpm: 78, factor: 80 / 78 });
    expect(result.codingHistory).toMatch(/speed corrected from 78 to 80 rpm \(x1\.025641/);

    const python = await findPython();
    const { stdout } = await run(python, [
      "-c",
      PITCH,
      JSON.stringify({ output, start: 20_000, n: 1 << 17 }),
    ]);
    const m = JSON.parse(stdout) as { rate: number; frames: number; fftHz: number; fitHz: number };
    expect(m.rate).toBe(FS);
    expect(m.frames).toBe(187_200);
    // Source: 1000 Hz × 80/78 = 1025.6410256… Hz (the tone as cut, played at the cut speed).
    const expected = (1000 * 80) / 78;
    expect(Math.abs(m.fitHz / expected - 1)).toBeLessThanOrEqual(1e-4);
    expect(Math.abs(m.fftHz / expected - 1)).toBeLessThanOrEqual(1e-4);
    console.log(
      `corrected tone: ${m.fitHz.toFixed(5)} Hz by sine fit, ${m.fftHz.toFixed(5)} Hz by FFT; expected ${expected.toFixed(5)} Hz`,
    );
  });

  it("equalizes the corrected copy with the RIAA curve at the cut speed within 0.005 dB and 0.5° at 20 tones", async () => {
    const unit = 1 << 11;
    const nOut = 39 * unit; // the copy's window at 48 kHz
    const nIn = 40 * unit; // the same stretch of the transfer: 80/78 as many samples
    const startOut = 39 * 256;
    const startIn = 40 * 256;
    const bins = Array.from({ length: 20 }, (_, i) => Math.round((20 * 1000 ** (i / 19) * nOut) / FS));
    expect(new Set(bins).size).toBe(20);
    const hzCopy = bins.map((k) => (k * FS) / nOut);
    const frames = startIn + nIn + 8 * unit;
    const rand = testRandom(29);
    const phases = bins.map(() => 2 * Math.PI * rand());
    const x = new Float64Array(frames);
    bins.forEach((k, i) => {
      // Bin k of the transfer's window: k × 48 000 / nIn Hz = the copy's tone × 78/80.
      for (let t = 0; t < frames; t++)
        x[t] += 0.045 * Math.cos((2 * Math.PI * ((k * t) % nIn)) / nIn + phases[i]);
    });
    const input = join(dir, "multitone.wav");
    const output = join(dir, "multitone-corrected.wav");
    await writeTransfer(input, x);
    const result = await renderCorrected(input, output);
    expect(result.frames).toBe(Math.round((frames * 78) / 80));

    const python = await findPython();
    const { stdout } = await run(
      python,
      ["-c", RESPONSE, JSON.stringify({ input, output, startIn, nIn, startOut, nOut, bins })],
      { maxBuffer: 1 << 24 },
    );
    const m = JSON.parse(stdout) as { rate: number; db: number[]; deg: number[] };
    expect(m.rate).toBe(FS);
    // Source: the analog RIAA curve at the cut speed (speed ratio 1, 0 dB at 1 kHz), lib/curves
    // analogResponse, itself checked against scipy.signal.freqs in curves-scipy.test.ts.
    const atCut = analogResponse(analogModel(RIAA_SPEC), hzCopy);
    let worstDb = 0;
    let worstDeg = 0;
    hzCopy.forEach((f, i) => {
      const errDb = m.db[i] - result.trimDb - atCut.gainDb[i];
      let errDeg = m.deg[i] - atCut.phaseDeg[i];
      errDeg -= 360 * Math.round(errDeg / 360);
      expect(Math.abs(errDb), `${f.toFixed(1)} Hz level`).toBeLessThanOrEqual(0.005);
      expect(Math.abs(errDeg), `${f.toFixed(1)} Hz phase`).toBeLessThanOrEqual(0.5);
      worstDb = Math.max(worstDb, Math.abs(errDb));
      worstDeg = Math.max(worstDeg, Math.abs(errDeg));
    });
    // Not the curve at the transfer's speed: at 10 kHz the two differ by far more than the tolerance.
    const atTransfer = analogResponse(analogModel(CHOSEN), hzCopy);
    expect(
      Math.max(...hzCopy.map((_, i) => Math.abs(atTransfer.gainDb[i] - atCut.gainDb[i]))),
    ).toBeGreaterThan(0.1);
    console.log(
      `speed corrected 78→80 rpm: worst ${worstDb.toExponential(2)} dB, ${worstDeg.toExponential(2)}° over 20 tones`,
    );
  });
});
