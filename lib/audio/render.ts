/**
 * Streaming render of the equalized access copy from a flat transfer.
 *
 * Chain, per output channel:
 *   read a chunk of frames → decode → channel mode (both / lateral sum /
 *   vertical difference / one groove wall) → FIR render filter by overlap-save
 *   (lib/curves PairConvolver for stereo, StreamingConvolver for mono; state
 *   carried across chunks) → drop the filter's first `delaySamples` outputs so
 *   the output lines up sample for sample with the input → (pass 2) gain trim,
 *   TPDF dither, encode → write.
 *
 * Two passes, never holding the file in memory: pass 1 runs the filter once,
 * measures the peak of the filtered signal and keeps the filtered samples in a
 * float64 spill file beside the output; the trim is then the largest gain
 * ≤ 0 dB that keeps that peak under the ceiling (full scale, or a requested
 * headroom), so nothing clips; pass 2 reads the spill back, applies the trim
 * and writes. The peak measured in pass 1 is exactly that of what pass 2 writes.
 * Disk: the spill takes 8 bytes per sample while the render runs.
 *
 * The end of the signal is flushed with `delaySamples` zeros so the last
 * samples get their full response; output length = input length.
 * At another rate than the transfer's (the lab's choice), the filtered signal is
 * resampled after the equalization (lib/audio/resample.ts: libsamplerate's best sinc
 * converter, its delay compensated), before the peak is measured.
 */
import { createHash } from "node:crypto";
import { createReadStream } from "node:fs";
import { open, unlink } from "node:fs/promises";
import { PairConvolver, StreamingConvolver } from "../curves/convolver";
import { formatCodingHistoryLine } from "./bext";
import type { BextInput } from "./bext";
import { decodeFrames, fullScalePositive } from "./codecs";
import type { SampleEncoding } from "./codecs";
import type { WavHeader } from "./header";
import type { ByteSource } from "./source";
import { Resampler } from "./resample";
import { BwfWriter } from "./writer";

export type ChannelMode = "both" | "sum" | "difference" | "left" | "right";

/** Words for the coding history and the UI. */
export const CHANNEL_MODE_TEXT: Record<ChannelMode, string> = {
  both: "both channels",
  sum: "lateral (L+R)/2",
  difference: "vertical (L-R)/2",
  left: "left groove wall",
  right: "right groove wall",
};

export interface EqualizationNote {
  /** The curve as the coding history should record it, e.g. "turnover 318 us; shelf 3180 us; rolloff 75 us; 0 dB at 1000 Hz". */
  curve: string;
  speedRatio: number;
  /** E.g. "Rillbook 0.1.0". */
  software: string;
}

export interface RenderOptions {
  source: ByteSource;
  header: WavHeader;
  filter: { taps: ArrayLike<number>; delaySamples: number };
  outputPath: string;
  /** Default "both". */
  channelMode?: ChannelMode;
  /** Default 24-bit PCM. */
  output?: SampleEncoding;
  /** Sample rate of the access copy; default the transfer's (then nothing is resampled). */
  outputSampleRateHz?: number;
  /** Peak ceiling in dBFS (≤ 0). Default 0: the trim only prevents clipping. */
  ceilingDbfs?: number;
  /** Frames per read; default a multiple of the convolver's block near 64k frames. */
  chunkFrames?: number;
  /** bext fields of the access copy; the coding history is built here. */
  bext?: Omit<BextInput, "codingHistory">;
  /** Recorded as the equalization line of the coding history. */
  equalization?: EqualizationNote;
  /** Fraction done, 0…1, called after each chunk. */
  onProgress?: (fraction: number) => void;
  ditherSeed?: number;
  /** Test hook: RIFF size above which the output is closed as RF64 (default 4 GiB). */
  rf64ThresholdBytes?: number;
}

export interface RenderResult {
  frames: number;
  channels: 1 | 2;
  /** Peak of the filtered signal before the trim (pass 1), dBFS. */
  peakDbfs: number;
  /** Peak written to the access copy (after the trim, before dither), dBFS. */
  outputPeakDbfs: number;
  /** Gain applied in pass 2, dB (≤ 0). */
  trimDb: number;
  clippedSamples: number;
  sha256: string;
  outputBytes: number;
  container: "RIFF" | "RF64";
  codingHistory: string;
}

const DEFAULT_OUTPUT: SampleEncoding = { format: "pcm", bitsPerSample: 24 };
const TARGET_CHUNK_FRAMES = 65_536;

export class RenderError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "RenderError";
  }
}

function outputChannels(mode: ChannelMode, inputChannels: number): 1 | 2 {
  if (mode !== "both" && inputChannels !== 2) {
    throw new RenderError(`Channel mode "${mode}" (${CHANNEL_MODE_TEXT[mode]}) needs a stereo transfer; this one is mono.`);
  }
  return mode === "both" ? (inputChannels as 1 | 2) : 1;
}

/** Write the channel-mode result for `n` frames into `dst`. */
function mix(mode: ChannelMode, input: Float64Array[], n: number, dst: Float64Array[]): void {
  if (mode === "both") {
    for (let c = 0; c < input.length; c++) dst[c].set(input[c].subarray(0, n));
    return;
  }
  const l = input[0];
  const r = input[1];
  const d = dst[0];
  if (mode === "sum") for (let i = 0; i < n; i++) d[i] = 0.5 * (l[i] + r[i]);
  else if (mode === "difference") for (let i = 0; i < n; i++) d[i] = 0.5 * (l[i] - r[i]);
  else d.set((mode === "left" ? l : r).subarray(0, n));
}

/**
 * One pass of the chain; `sink` receives the aligned output in order, as
 * per-channel arrays of equal length, exactly header.frames frames in all.
 */
async function runChain(
  opts: RenderOptions,
  mode: ChannelMode,
  channelsOut: number,
  chunkFrames: number,
  sink: (block: Float64Array[]) => Promise<void> | void,
  progress: (framesRead: number) => void,
): Promise<void> {
  const { header, source, filter } = opts;
  // Stereo goes through one complex FFT per block (PairConvolver); mono through its own.
  const pair = channelsOut === 2 ? new PairConvolver(filter.taps) : null;
  const single = channelsOut === 1 ? new StreamingConvolver(filter.taps) : null;
  const filterBlock = (blocks: Float64Array[]): Float64Array[] => (pair ? pair.process(blocks[0], blocks[1]) : [single!.process(blocks[0])]);
  const decoded = Array.from({ length: header.channels }, () => new Float64Array(chunkFrames));
  const mixed = Array.from({ length: channelsOut }, () => new Float64Array(chunkFrames));
  const encoding: SampleEncoding = { format: header.format, bitsPerSample: header.bitsPerSample };
  let toDrop = filter.delaySamples;

  const emit = async (filtered: Float64Array[]) => {
    const drop = Math.min(toDrop, filtered[0].length);
    toDrop -= drop;
    if (filtered[0].length > drop) await sink(drop === 0 ? filtered : filtered.map((f) => f.subarray(drop)));
  };

  for (let start = 0; start < header.frames; start += chunkFrames) {
    const n = Math.min(chunkFrames, header.frames - start);
    const bytes = await source.read(header.dataOffset + start * header.blockAlign, n * header.blockAlign);
    if (bytes.length !== n * header.blockAlign) {
      throw new RenderError(`The transfer ended early: frame ${start + Math.floor(bytes.length / header.blockAlign)} of ${header.frames} (byte ${header.dataOffset + start * header.blockAlign + bytes.length}).`);
    }
    const input = decodeFrames(bytes, encoding, header.channels, decoded);
    mix(mode, input, n, mixed);
    await emit(filterBlock(mixed.map((m) => m.subarray(0, n))));
    progress(start + n);
  }
  // Ring-out: the last delaySamples outputs depend on input beyond the end, taken as silence.
  if (filter.delaySamples > 0) {
    const zeros = new Float64Array(filter.delaySamples);
    await emit(filterBlock(mixed.map(() => zeros)));
  }
}

function peakOf(block: Float64Array[]): number {
  let peak = 0;
  for (const ch of block) {
    for (let i = 0; i < ch.length; i++) {
      const a = Math.abs(ch[i]);
      if (a > peak) peak = a;
    }
  }
  return peak;
}

function toDb(linear: number): number {
  return linear > 0 ? 20 * Math.log10(linear) : -Infinity;
}

function modeWord(channels: number): string {
  return channels === 1 ? "mono" : "stereo";
}

async function sha256File(path: string): Promise<string> {
  const hash = createHash("sha256");
  for await (const chunk of createReadStream(path, { highWaterMark: 1 << 20 })) hash.update(chunk as Buffer);
  return hash.digest("hex");
}

/** Render the equalized access copy. See the file comment for the chain. */
export async function renderAccessCopy(opts: RenderOptions): Promise<RenderResult> {
  const { header, filter } = opts;
  const mode = opts.channelMode ?? "both";
  const output = opts.output ?? DEFAULT_OUTPUT;
  const ceilingDbfs = opts.ceilingDbfs ?? 0;
  if (!(ceilingDbfs <= 0)) throw new RenderError(`The peak ceiling must be at most 0 dBFS, not ${ceilingDbfs}.`);
  if (filter.taps.length < 1) throw new RenderError("The render filter has no taps.");
  if (!Number.isInteger(filter.delaySamples) || filter.delaySamples < 0 || filter.delaySamples >= filter.taps.length) {
    throw new RenderError(`The filter delay ${filter.delaySamples} is not a whole number of samples within its ${filter.taps.length} taps.`);
  }
  const channelsOut = outputChannels(mode, header.channels);
  const blockSize = new StreamingConvolver(filter.taps).blockSize;
  const chunkFrames = opts.chunkFrames ?? Math.max(1, Math.round(TARGET_CHUNK_FRAMES / blockSize)) * blockSize;
  const total = Math.max(1, header.frames);
  const report = opts.onProgress ?? (() => {});

  // Pass 1: filter once, keep the aligned result in a float64 spill file beside the
  // output (exactly what the filter computed: a float32 spill would add up to half an
  // LSB of rounding to a 24-bit copy) and measure its peak. Pass 2 only trims, dithers
  // and writes, so the filter runs once; the price is disk space for the spill.
  const spillPath = `${opts.outputPath}.filtered`;
  const spill = await open(spillPath, "w");
  let peak = 0;
  const outRate = opts.outputSampleRateHz ?? header.sampleRateHz;
  const resampler = outRate !== header.sampleRateHz ? await Resampler.create(channelsOut, header.sampleRateHz, outRate, header.frames) : null;
  const outFrames = resampler ? resampler.expectedFrames : header.frames;
  try {
    let spillAt = 0;
    const keep = async (block: Float64Array[]) => {
      if (block[0].length === 0) return;
      const p = peakOf(block);
      if (p > peak) peak = p;
      const frames = block[0].length;
      const interleaved = new Float64Array(frames * channelsOut);
      for (let c = 0; c < channelsOut; c++) {
        const ch = block[c];
        for (let i = 0; i < frames; i++) interleaved[i * channelsOut + c] = ch[i];
      }
      const bytes = new Uint8Array(interleaved.buffer);
      await spill.write(bytes, 0, bytes.length, spillAt);
      spillAt += bytes.length;
    };
    await runChain(opts, mode, channelsOut, chunkFrames, (block) => keep(resampler ? resampler.process(block) : block), (done) => report((0.8 * done) / total));
    if (resampler) await keep(resampler.finish());
    await spill.close();
  } catch (error) {
    await spill.close().catch(() => {});
    await unlink(spillPath).catch(() => {});
    throw error;
  }

  // The trim: integer output keeps 2 LSB below the top code so the dither
  // (< 1 LSB) and rounding (≤ ½ LSB) cannot reach past it.
  const ceiling = 10 ** (ceilingDbfs / 20);
  const limit =
    output.format === "pcm" ? ceiling * (fullScalePositive(output) - 2 ** -(output.bitsPerSample - 1)) : ceiling * (1 - 2 ** -24);
  const gain = peak > limit ? limit / peak : 1;
  const trimDb = toDb(gain);

  const transferLine = formatCodingHistoryLine({
    algorithm: "PCM",
    samplingHz: header.sampleRateHz,
    wordLength: header.bitsPerSample,
    mode: modeWord(header.channels),
    text: `flat transfer${header.format === "float" ? "; IEEE float" : ""}`,
  });
  const eq = opts.equalization;
  const eqText = [
    eq ? eq.software : "Rillbook",
    eq ? `equalization ${eq.curve}` : "equalization",
    eq ? `speed ratio ${eq.speedRatio}` : null,
    `trim ${trimDb.toFixed(2)} dB`,
    CHANNEL_MODE_TEXT[mode],
    "delay-compensated FIR render filter",
    outRate !== header.sampleRateHz ? `resampled from ${header.sampleRateHz} Hz (libsamplerate, best sinc)` : null,
    output.format === "pcm" ? "TPDF dither" : "float",
  ]
    .filter((s) => s !== null)
    .join("; ");
  const eqLine = formatCodingHistoryLine({
    algorithm: "PCM",
    samplingHz: outRate,
    wordLength: output.bitsPerSample,
    mode: modeWord(channelsOut),
    text: eqText,
  });
  // Keep the transfer's own history (the capture chain) when it has one; otherwise describe it.
  const prior = header.bext?.codingHistory ?? "";
  const priorLines = prior === "" ? transferLine : prior.endsWith("\r\n") ? prior : `${prior.replace(/[\r\n]+$/, "")}\r\n`;
  const codingHistory = priorLines + eqLine;

  // Pass 2: trim, dither, write.
  const writer = await BwfWriter.create(opts.outputPath, {
    sampleRateHz: outRate,
    channels: channelsOut,
    encoding: output,
    bext: { ...opts.bext, codingHistory },
    ditherSeed: opts.ditherSeed,
    rf64ThresholdBytes: opts.rf64ThresholdBytes,
  });
  let result;
  try {
    const reader = await open(spillPath, "r");
    try {
      const frameBytes = 8 * channelsOut;
      const blocks = Array.from({ length: channelsOut }, () => new Float64Array(chunkFrames));
      const buffer = new Uint8Array(chunkFrames * frameBytes);
      for (let start = 0; start < outFrames; start += chunkFrames) {
        const n = Math.min(chunkFrames, outFrames - start);
        await reader.read(buffer, 0, n * frameBytes, start * frameBytes);
        const samples = new Float64Array(buffer.buffer, 0, n * channelsOut);
        for (let c = 0; c < channelsOut; c++) {
          const ch = blocks[c];
          for (let i = 0; i < n; i++) ch[i] = samples[i * channelsOut + c];
        }
        await writer.write(n === chunkFrames ? blocks : blocks.map((b) => b.subarray(0, n)), n, gain);
        report(0.8 + (0.2 * (start + n)) / Math.max(1, outFrames));
      }
    } finally {
      await reader.close();
    }
    result = await writer.close();
  } catch (error) {
    await writer.abort();
    await unlink(opts.outputPath).catch(() => {});
    throw error;
  } finally {
    await unlink(spillPath).catch(() => {});
  }
  const sha256 = await sha256File(opts.outputPath);
  report(1);
  return {
    frames: result.frames,
    channels: channelsOut,
    peakDbfs: toDb(peak),
    outputPeakDbfs: toDb(peak * gain),
    trimDb,
    clippedSamples: result.clippedSamples,
    sha256,
    outputBytes: result.bytes,
    container: result.container,
    codingHistory,
  };
}
