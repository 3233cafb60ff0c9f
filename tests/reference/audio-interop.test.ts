/**
 * Files Rillbook's writer produces, read back by readers outside the project:
 * wavefile (npm), `sox --i` (SoX 14.4), and a byte-level python struct check
 * of the bext chunk against the EBU Tech 3285 v2 offsets.
 */
import { execFile } from "node:child_process";
import { mkdtemp, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import { BwfWriter, openFileSource, readWavHeader } from "@/lib/audio";
import type { SampleEncoding } from "@/lib/audio";
import { findPython } from "../support/python";
import { CORPUS_BEXT, testSignal } from "../support/wav-corpus";

const run = promisify(execFile);
let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "rillbook-interop-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

async function soxInfo(path: string): Promise<Record<string, string>> {
  const { stdout } = await run("sox", ["--i", path]);
  const out: Record<string, string> = {};
  for (const line of stdout.split("\n")) {
    const m = /^([A-Za-z ]+?)\s*:\s*(.*)$/.exec(line);
    if (m) out[m[1]] = m[2];
  }
  return out;
}

const CASES: { encoding: SampleEncoding; channels: 1 | 2; rate: number; frames: number; rf64: boolean }[] = [
  { encoding: { format: "pcm", bitsPerSample: 16 }, channels: 2, rate: 44_100, frames: 44_100, rf64: false },
  { encoding: { format: "pcm", bitsPerSample: 24 }, channels: 2, rate: 96_000, frames: 48_001, rf64: false },
  { encoding: { format: "pcm", bitsPerSample: 24 }, channels: 1, rate: 192_000, frames: 19_201, rf64: true },
  { encoding: { format: "pcm", bitsPerSample: 32 }, channels: 1, rate: 88_200, frames: 8820, rf64: false },
  {
    encoding: { format: "float", bitsPerSample: 32 },
    channels: 2,
    rate: 384_000,
    frames: 38_400,
    rf64: true,
  },
];

describe("Rillbook BWF files in other readers", () => {
  for (const c of CASES) {
    const label = `${c.encoding.format}${c.encoding.bitsPerSample} ${c.channels}ch ${c.rate} Hz${c.rf64 ? " RF64" : ""}`;
    it(label, async () => {
      const path = join(dir, `${label.replace(/\W+/g, "-")}.wav`);
      const values = testSignal(c.frames, c.channels, c.frames, 0.7);
      const w = await BwfWriter.create(path, {
        sampleRateHz: c.rate,
        channels: c.channels,
        encoding: c.encoding,
        bext: CORPUS_BEXT,
        rf64ThresholdBytes: c.rf64 ? 4096 : undefined,
      });
      for (let s = 0; s < c.frames; s += 10_000)
        await w.write(values.map((v) => v.subarray(s, Math.min(c.frames, s + 10_000))));
      const result = await w.close();
      expect(result.container).toBe(c.rf64 ? "RF64" : "RIFF");

      // Source: sox --i (SoX 14.4.2).
      const info = await soxInfo(path);
      expect(Number(info["Channels"])).toBe(c.channels);
      expect(Number(info["Sample Rate"])).toBe(c.rate);
      expect(info["Sample Encoding"]).toBe(
        c.encoding.format === "pcm"
          ? `${c.encoding.bitsPerSample}-bit Signed Integer PCM`
          : "32-bit Floating Point PCM",
      );
      expect(info["Duration"]).toMatch(new RegExp(` = ${c.frames} samples`));

      // Source: wavefile (npm). It reads the RIFF layout only, so RF64 files are checked by sox and python.
      if (!c.rf64) {
        const wav = new WaveFile(await readFile(path));
        const fmt = wav.fmt as { numChannels: number; sampleRate: number; bitsPerSample: number };
        expect([fmt.numChannels, fmt.sampleRate, fmt.bitsPerSample]).toEqual([
          c.channels,
          c.rate,
          c.encoding.bitsPerSample,
        ]);
        const samples = wav.getSamples(false) as unknown as Float64Array[] | Float64Array;
        const first = Array.isArray(samples) ? samples[0] : samples;
        expect(first.length).toBe(c.frames);
      }

      // Our own reader agrees.
      const source = await openFileSource(path);
      const h = await readWavHeader(source);
      await source.close();
      expect([h.container, h.channels, h.sampleRateHz, h.bitsPerSample, h.frames]).toEqual([
        result.container,
        c.channels,
        c.rate,
        c.encoding.bitsPerSample,
        c.frames,
      ]);
      expect(h.bext?.codingHistory).toBe(CORPUS_BEXT.codingHistory);
    });
  }

  it("bext fields at the EBU Tech 3285 v2 byte offsets (python struct)", async () => {
    const path = join(dir, "bext-check.wav");
    const w = await BwfWriter.create(path, {
      sampleRateHz: 96_000,
      channels: 2,
      encoding: { format: "pcm", bitsPerSample: 24 },
      bext: CORPUS_BEXT,
      rf64ThresholdBytes: 100,
    });
    await w.write(testSignal(1000, 2));
    await w.close();
    // Source: python's struct module walking the chunks itself (RIFF/RF64, ds64 and bext layouts from the EBU documents).
    const script = String.raw`
import json, struct, sys
b = open(sys.argv[1], 'rb').read()
assert b[:4] in (b'RIFF', b'RF64') and b[8:12] == b'WAVE'
p, chunks = 12, {}
while p + 8 <= len(b):
    cid, size = struct.unpack_from('<4sI', b, p)
    chunks[cid.decode('latin1')] = (p + 8, size)
    if cid == b'data':
        break
    p += 8 + size + (size & 1)
o, size = chunks['bext']
s = lambda a, n: b[o + a:o + a + n].split(b'\0')[0].decode('ascii')
lo, hi, ver = struct.unpack_from('<IIH', b, o + 338)
loud = struct.unpack_from('<5h', b, o + 412)
ds = struct.unpack_from('<QQQ', b, chunks['ds64'][0]) if 'ds64' in chunks else None
print(json.dumps({
  'container': b[:4].decode(), 'description': s(0, 256), 'originator': s(256, 32), 'originatorReference': s(288, 32),
  'originationDate': s(320, 10), 'originationTime': s(330, 8), 'timeReference': lo + (hi << 32), 'version': ver,
  'umid': b[o + 348:o + 412].hex(), 'loudness': [v / 100 for v in loud], 'reservedZero': not any(b[o + 422:o + 602]),
  'codingHistory': b[o + 602:o + size].decode('ascii'), 'ds64': ds, 'fileSize': len(b)}))
`;
    const python = await findPython();
    const { stdout } = await run(python, ["-c", script, path]);
    const got = JSON.parse(stdout);
    const b = CORPUS_BEXT;
    expect(got).toMatchObject({
      container: "RF64",
      description: b.description,
      originator: b.originator,
      originatorReference: b.originatorReference,
      originationDate: b.originationDate,
      originationTime: b.originationTime,
      timeReference: b.timeReference,
      version: 2,
      umid: b.umid,
      loudness: [
        b.loudnessValue,
        b.loudnessRange,
        b.maxTruePeakLevel,
        b.maxMomentaryLoudness,
        b.maxShortTermLoudness,
      ],
      reservedZero: true,
      codingHistory: b.codingHistory,
    });
    expect(got.ds64).toEqual([got.fileSize - 8, 6000, 1000]);
  });
});
