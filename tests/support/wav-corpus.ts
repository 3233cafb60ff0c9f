/**
 * Test corpus of WAV files, generated fresh in a temporary folder.
 *
 * Good files come from writers outside lib/audio wherever one exists:
 * wavefile (npm, general-purpose) for PCM 16/24/32 and float 32/64 and a BWF
 * with bext, sox for WAVE_FORMAT_EXTENSIBLE (sox writes EXTENSIBLE above 16
 * bits). The RF64 file is written by Rillbook's own writer with its RF64
 * switch forced by the test-only threshold (no general-purpose node library
 * writes RF64 with bext), and is then read back by sox and python.
 *
 * Bad files are built byte by byte from the Microsoft RIFF/WAVE layout so each
 * carries exactly one fault.
 */
import { execFile } from "node:child_process";
import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { WaveFile } from "wavefile";
import { BwfWriter } from "@/lib/audio";
import { seededRandom } from "@/lib/seeded-random";
import type { BextInput } from "@/lib/audio";

const run = promisify(execFile);

/** Deterministic uniform (−0.5, 0.5) generator for test signals (mulberry32). */
export function testRandom(seed: number): () => number {
  const next = seededRandom(seed);
  return () => next() - 0.5;
}

/** A short test signal per channel: a tone plus noise, peak below `peak`. */
export function testSignal(frames: number, channels: number, seed = 1, peak = 0.9): Float64Array[] {
  const rand = testRandom(seed);
  return Array.from({ length: channels }, (_, c) =>
    Float64Array.from(
      { length: frames },
      (_, i) => peak * (0.6 * Math.sin((2 * Math.PI * (i * (c + 1))) / 97) + 0.4 * 2 * rand()),
    ),
  );
}

export interface GoodFile {
  name: string;
  path: string;
  /** What the header must say, from the generator's own parameters. */
  expect: {
    container: "RIFF" | "RF64";
    format: "pcm" | "float";
    bitsPerSample: number;
    channels: number;
    sampleRateHz: number;
    frames: number;
    extensible: boolean;
  };
  /** Integer codes (PCM) or float values the generator stored, per channel; absent for sox files. */
  stored?: number[][];
  bext?: BextInput;
}

export interface BadFile {
  name: string;
  path: string;
  /** The specific message the reader must give. */
  message: RegExp;
  /** The byte offset the reader must name, when there is one. */
  offset?: number;
}

export interface WavCorpus {
  dir: string;
  good: GoodFile[];
  bad: BadFile[];
  cleanup(): Promise<void>;
}

export const CORPUS_BEXT: BextInput = {
  description: "Side A, matrix 0-4711-2; flat transfer for corpus tests",
  originator: "Rillbook test lab",
  originatorReference: "RB-CORPUS-0001",
  originationDate: "2026-03-14",
  originationTime: "09:26:53",
  timeReference: 5_000_000_123,
  version: 2,
  umid: "060a2b340101010501010d4313000000" + "0123456789abcdef0123456789abcdef" + "00".repeat(32),
  loudnessValue: -23.5,
  loudnessRange: 7.25,
  maxTruePeakLevel: -1.03,
  maxMomentaryLoudness: -18.2,
  maxShortTermLoudness: -20.01,
  codingHistory:
    "A=ANALOGUE,M=mono,T=corpus turntable; 3.5 mil stylus\r\nA=PCM,F=96000,W=24,M=stereo,T=corpus converter\r\n",
};

interface FmtSpec {
  tag?: number;
  channels?: number;
  rate?: number;
  bits?: number;
  blockAlign?: number;
}

function chunk(id: string, body: Uint8Array, sizeOverride?: number): Uint8Array {
  const out = new Uint8Array(8 + body.length + (body.length & 1));
  for (let i = 0; i < 4; i++) out[i] = id.charCodeAt(i);
  new DataView(out.buffer).setUint32(4, sizeOverride ?? body.length, true);
  out.set(body, 8);
  return out;
}

function fmtBody(spec: FmtSpec): Uint8Array {
  const channels = spec.channels ?? 2;
  const bits = spec.bits ?? 16;
  const rate = spec.rate ?? 48_000;
  const blockAlign = spec.blockAlign ?? Math.max(1, (channels * bits) / 8);
  const b = new Uint8Array(16);
  const v = new DataView(b.buffer);
  v.setUint16(0, spec.tag ?? 1, true);
  v.setUint16(2, channels, true);
  v.setUint32(4, rate, true);
  v.setUint32(8, rate * blockAlign, true);
  v.setUint16(12, blockAlign, true);
  v.setUint16(14, bits, true);
  return b;
}

function riff(chunks: Uint8Array[], riffSizeOverride?: number): Uint8Array {
  const bodyLength = 4 + chunks.reduce((s, c) => s + c.length, 0);
  const out = new Uint8Array(8 + bodyLength);
  out.set([0x52, 0x49, 0x46, 0x46], 0);
  new DataView(out.buffer).setUint32(4, riffSizeOverride ?? bodyLength, true);
  out.set([0x57, 0x41, 0x56, 0x45], 8);
  let o = 12;
  for (const c of chunks) {
    out.set(c, o);
    o += c.length;
  }
  return out;
}

/** A minimal valid PCM file with the given fmt, `frames` frames of zeros, and optional extra chunks before data. */
export function handMadeWav(spec: FmtSpec, frames = 16, before: Uint8Array[] = []): Uint8Array {
  const channels = spec.channels ?? 2;
  const bits = spec.bits ?? 16;
  const data = new Uint8Array(Math.max(1, (channels * bits) / 8) * frames);
  return riff([chunk("fmt ", fmtBody(spec)), ...before, chunk("data", data)]);
}

function storedInts(values: Float64Array[], bits: number): number[][] {
  const scale = 2 ** (bits - 1);
  return values.map((ch) =>
    Array.from(ch, (v) => Math.max(-scale, Math.min(scale - 1, Math.round(v * scale)))),
  );
}

export async function buildWavCorpus(): Promise<WavCorpus> {
  const dir = await mkdtemp(join(tmpdir(), "rillbook-wav-"));
  const good: GoodFile[] = [];
  const bad: BadFile[] = [];

  // wavefile: PCM 16/24/32 and float 32/64, mono and stereo.
  const cases: [string, number, number, number][] = [
    ["16", 16, 2, 44_100],
    ["16", 16, 1, 48_000],
    ["24", 24, 2, 96_000],
    ["24", 24, 1, 192_000],
    ["32", 32, 2, 88_200],
    ["32f", 32, 2, 96_000],
    ["32f", 32, 1, 384_000],
    ["64", 64, 2, 176_400],
  ];
  for (const [code, bits, channels, rate] of cases) {
    const frames = 1000 + channels * 7 + bits;
    const values = testSignal(frames, channels, bits + channels);
    const isFloat = code === "32f" || code === "64";
    const stored = isFloat
      ? values.map((ch) => Array.from(code === "32f" ? Float32Array.from(ch) : ch))
      : storedInts(values, bits);
    const wav = new WaveFile();
    wav.fromScratch(channels, rate, code, channels === 1 ? stored[0] : stored);
    const name = `wavefile-${code}-${channels}ch-${rate}.wav`;
    const path = join(dir, name);
    await writeFile(path, wav.toBuffer());
    good.push({
      name,
      path,
      expect: {
        container: "RIFF",
        format: isFloat ? "float" : "pcm",
        bitsPerSample: bits,
        channels,
        sampleRateHz: rate,
        frames,
        extensible: false,
      },
      stored,
    });
  }

  // wavefile BWF with every bext field set.
  {
    const frames = 777;
    const stored = storedInts(testSignal(frames, 2, 99), 24);
    const wav = new WaveFile();
    wav.fromScratch(2, 96_000, "24", stored);
    const b = CORPUS_BEXT;
    const bext = wav.bext as Record<string, unknown>;
    Object.assign(bext, {
      description: b.description,
      originator: b.originator,
      originatorReference: b.originatorReference,
      originationDate: b.originationDate,
      originationTime: b.originationTime,
      timeReference: [b.timeReference! % 2 ** 32, Math.floor(b.timeReference! / 2 ** 32)],
      version: 2,
      // wavefile writes UMID as text; our UMID is binary, so this file leaves it empty (checked on the RF64 file instead).
      UMID: "",
      // wavefile packs these as unsigned 16-bit; two's complement gives the signed values Tech 3285 defines.
      loudnessValue: Math.round(b.loudnessValue! * 100) & 0xffff,
      loudnessRange: Math.round(b.loudnessRange! * 100) & 0xffff,
      maxTruePeakLevel: Math.round(b.maxTruePeakLevel! * 100) & 0xffff,
      maxMomentaryLoudness: Math.round(b.maxMomentaryLoudness! * 100) & 0xffff,
      maxShortTermLoudness: Math.round(b.maxShortTermLoudness! * 100) & 0xffff,
      codingHistory: b.codingHistory,
    });
    const name = "wavefile-bwf-24-2ch-96000.wav";
    const path = join(dir, name);
    await writeFile(path, wav.toBuffer());
    good.push({
      name,
      path,
      expect: {
        container: "RIFF",
        format: "pcm",
        bitsPerSample: 24,
        channels: 2,
        sampleRateHz: 96_000,
        frames,
        extensible: false,
      },
      stored,
      bext: { ...b, umid: "" },
    });
  }

  // sox: 24-bit stereo, which sox writes as WAVE_FORMAT_EXTENSIBLE, and 32-bit
  // float, which it writes as plain IEEE_FLOAT with a fact chunk.
  for (const [bits, enc, format, extensible] of [
    [24, "signed-integer", "pcm", true],
    [32, "floating-point", "float", false],
  ] as const) {
    const name = `sox-${bits}-${format}${extensible ? "-extensible" : ""}.wav`;
    const path = join(dir, name);
    // 0.01 s at 96 kHz = 960 frames (sox synth length, exact at this rate).
    await run("sox", [
      "-n",
      "-r",
      "96000",
      "-b",
      String(bits),
      "-e",
      enc,
      "-c",
      "2",
      path,
      "synth",
      "0.01",
      "sine",
      "1000",
      "gain",
      "-6",
    ]);
    good.push({
      name,
      path,
      expect: {
        container: "RIFF",
        format,
        bitsPerSample: bits,
        channels: 2,
        sampleRateHz: 96_000,
        frames: 960,
        extensible,
      },
    });
  }

  // Rillbook writer, RF64 forced, bext with every field including the UMID.
  {
    const frames = 1501; // odd frame count × 3 bytes mono: odd data size, so the pad byte is exercised
    const values = testSignal(frames, 1, 7);
    const path = join(dir, "rillbook-rf64-24-1ch-96000.wav");
    const writer = await BwfWriter.create(path, {
      sampleRateHz: 96_000,
      channels: 1,
      encoding: { format: "pcm", bitsPerSample: 24 },
      bext: CORPUS_BEXT,
      dither: false,
      rf64ThresholdBytes: 1024,
    });
    await writer.write(values);
    await writer.close();
    good.push({
      name: "rillbook-rf64-24-1ch-96000.wav",
      path,
      expect: {
        container: "RF64",
        format: "pcm",
        bitsPerSample: 24,
        channels: 1,
        sampleRateHz: 96_000,
        frames,
        extensible: false,
      },
      stored: storedInts(values, 24),
      bext: CORPUS_BEXT,
    });
  }

  // ---- bad corpus ----
  const addBad = async (name: string, bytes: Uint8Array, message: RegExp, offset?: number) => {
    const path = join(dir, name);
    await writeFile(path, bytes);
    bad.push({ name, path, message, offset });
  };
  const valid = handMadeWav({ channels: 2, bits: 16 });
  await addBad(
    "truncated-header.wav",
    valid.subarray(0, 30),
    /^Truncated header: the fmt chunk at byte offset 12 declares 16 bytes but the file ends after 10/,
    12,
  );
  await addBad("truncated-riff.wav", valid.subarray(0, 9), /^Truncated header: the file is 9 bytes/, 9);
  {
    // A LIST chunk claiming 2 GB in a 100-byte file.
    const list = chunk("LIST", new TextEncoder().encode("INFOISFT"), 0x7fff0000);
    await addBad(
      "lying-chunk-size.wav",
      handMadeWav({}, 16, [list]),
      /^Chunk "LIST" at byte offset 36 declares 2147418112 bytes, which runs \d+ bytes past the end of the file/,
      36,
    );
  }
  {
    const b = handMadeWav({}, 16);
    new DataView(b.buffer).setUint32(40, 1_000_000, true); // data size field (data chunk at 36)
    await addBad(
      "data-longer-than-file.wav",
      b,
      /^The data chunk at byte offset 36 declares 1000000 bytes of audio but only 64 bytes follow it/,
      36,
    );
  }
  await addBad(
    "pcm-8bit.wav",
    handMadeWav({ bits: 8, channels: 1 }),
    /^Unsupported encoding: 8-bit PCM \(fmt chunk at byte offset 12\)/,
    34,
  );
  await addBad(
    "mulaw.wav",
    handMadeWav({ tag: 7, bits: 8, channels: 1 }),
    /^Unsupported encoding: μ-law \(format tag 0x0007, fmt chunk at byte offset 12\)/,
    20,
  );
  await addBad(
    "ms-adpcm.wav",
    handMadeWav({ tag: 2, bits: 4, channels: 1, blockAlign: 1 }),
    /^Unsupported encoding: Microsoft ADPCM \(format tag 0x0002/,
    20,
  );
  await addBad(
    "zero-channels.wav",
    handMadeWav({ channels: 0, blockAlign: 2 }),
    /^0 channels: the fmt chunk at byte offset 12 declares no audio channels/,
    22,
  );
  await addBad(
    "seven-channels.wav",
    handMadeWav({ channels: 7 }),
    /^7 channels: Rillbook accepts mono or stereo transfers \(fmt chunk at byte offset 12\)/,
    22,
  );
  await addBad(
    "text-renamed.wav",
    new TextEncoder().encode("Accession 1957/12, side A: see the ledger.\n"),
    /^Not a RIFF\/RF64 WAVE file: it starts with "Acce"/,
    0,
  );
  await addBad("empty.wav", new Uint8Array(0), /^The file is empty \(0 bytes\)/, 0);
  await addBad(
    "block-align.wav",
    handMadeWav({ channels: 2, bits: 24, blockAlign: 4 }),
    /^Block align mismatch: nBlockAlign is 4 but 2 channels × 24 bits needs 6 bytes per frame/,
    32,
  );
  await addBad(
    "rate-22050.wav",
    handMadeWav({ rate: 22_050 }),
    /^Sample rate 22050 Hz \(fmt chunk at byte offset 12\) is outside the 44 100–384 000 Hz/,
    24,
  );
  await addBad("no-data.wav", riff([chunk("fmt ", fmtBody({}))]), /^No data chunk: the file holds no audio/);
  await addBad(
    "no-fmt.wav",
    riff([chunk("LIST", new TextEncoder().encode("INFO"))]),
    /^No fmt chunk: the file does not say how its samples are encoded/,
  );
  await addBad(
    "float-16.wav",
    handMadeWav({ tag: 3, bits: 16 }),
    /^Unsupported encoding: 16-bit IEEE float/,
    34,
  );
  {
    const b = handMadeWav({}, 16);
    b.set([0x41, 0x56, 0x49, 0x20], 8); // "AVI "
    await addBad("riff-avi.wav", b, /^Not a WAVE file: the RIFF form type is "AVI " instead of "WAVE"/, 8);
  }

  return { dir, good, bad, cleanup: () => rm(dir, { recursive: true, force: true }) };
}
