/**
 * Streaming render of the equalized access copy from a flat transfer.
 *
 * Chain, per output channel:
 *   read a chunk of frames → decode → channel mode (both / lateral sum /
 *   vertical difference / one groove wall) → FIR render filter by overlap-save
 *   (state carried across chunks; stereo frames go through one complex FFT) →
 *   drop the filter's first `delaySamples` outputs so the output lines up sample
 *   for sample with the input → gain trim, TPDF dither, encode → write.
 * Samples stay interleaved, as in the files, from end to end. The loops run in
 * the native engine where it is built, else in JavaScript (lib/audio/dsp.ts).
 *
 * The trim is the largest gain ≤ 0 dB that keeps the peak of the filtered signal
 * under the ceiling (full scale, or a requested headroom), so nothing clips; the
 * peak is measured, never estimated, and the file is never held in memory:
 *
 * - pass 1 filters, measures the peak and, while the peak stays under the
 *   ceiling, writes the copy at 0 dB trim as it goes. When the whole signal fits
 *   (the usual case for a transfer with headroom) that is the copy: one pass.
 * - Once the peak passes the ceiling, pass 1 stops writing and measures on,
 *   keeping the filtered signal from that point in a float64 working file beside
 *   the output (8 bytes per sample) when the disk has room. Pass 2 writes with
 *   the trim: it filters the part before that point again (the same arithmetic,
 *   so the same samples) and reads the rest back; without room it filters it all
 *   again, which takes longer but no disk.
 *
 * Either way the copy is exactly what one filtering, one measured trim and one
 * dithered write give. The writer knows the length in advance, so the file's
 * SHA-256 is taken as it is written.
 *
 * The end of the signal is flushed with `delaySamples` zeros so the last
 * samples get their full response; output length = input length.
 * At another rate than the transfer's (the lab's choice), the filtered signal is
 * resampled after the equalization (lib/audio/resample.ts: libsamplerate's best sinc
 * converter, its delay compensated), before the peak is measured.
 */
import { open, statfs, unlink } from "node:fs/promises";
import type { FileHandle } from "node:fs/promises";
import { dirname } from "node:path";
import { formatCodingHistoryLine } from "./bext";
import { CHANNEL_MODE_TEXT, mixToMono } from "./channel-mode";
import type { ChannelMode } from "./channel-mode";
import type { BextInput } from "./bext";
import { fullScalePositive } from "./codecs";
import type { SampleEncoding } from "./codecs";
import type { WavHeader } from "./header";
import type { ByteSource } from "./source";
import { convolverSizes } from "../curves/convolver";
import { defaultDsp } from "./dsp";
import type { DspEngine } from "./dsp";
import { Resampler } from "./resample";
import { BwfWriter } from "./writer";

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
  /** The description and originator in full Unicode (an iXML chunk), where bext holds them as ASCII. */
  unicodeText?: { project?: string; note: string };
  /** Recorded as the equalization line of the coding history. */
  equalization?: EqualizationNote;
  /** Fraction done, 0…1, called after each chunk. */
  onProgress?: (fraction: number) => void;
  ditherSeed?: number;
  /** Test hook: RIFF size above which the output is closed as RF64 (default 4 GiB). */
  rf64ThresholdBytes?: number;
  /** Engine of the inner loops; default the native one where built (lib/audio/dsp.ts). */
  dsp?: DspEngine;
  /**
   * When a trim is needed: "auto" (default) keeps the filtered signal from where the peak
   * passed the ceiling in a float64 working file beside the output, if the disk has room,
   * so pass 2 reads it back instead of filtering it again; "never" always filters again.
   * The copy is the same bytes either way.
   */
  keepFiltered?: "auto" | "never";
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
  /** The engine that ran the inner loops, e.g. "native (fftw-3.3.10)". */
  engine: string;
  /** With a trim: how pass 2 got its samples, frames filtered again and frames read back. */
  secondPass: { filteredFrames: number; readBackFrames: number } | null;
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
    throw new RenderError(
      `Channel mode "${mode}" (${CHANNEL_MODE_TEXT[mode]}) needs a stereo transfer; this one is mono.`,
    );
  }
  return mode === "both" ? (inputChannels as 1 | 2) : 1;
}

/**
 * One pass of the chain; `sink` receives the aligned output in order, interleaved,
 * exactly header.frames frames in all, unless it answers `false` (enough: the pass
 * stops there). The array it gets is reused after it returns.
 */
async function runChain(
  opts: RenderOptions,
  dsp: DspEngine,
  mode: ChannelMode,
  channelsOut: 1 | 2,
  chunkFrames: number,
  sink: (samples: Float64Array, frames: number) => Promise<boolean | void> | boolean | void,
  progress: (framesRead: number) => void,
): Promise<void> {
  const { header, source } = opts;
  const filter = dsp.filter(opts.filter.taps, channelsOut);
  const decoded = new Float64Array(chunkFrames * header.channels);
  const mixed = mode === "both" ? decoded : new Float64Array(chunkFrames);
  const filtered = new Float64Array(chunkFrames * channelsOut);
  const encoding: SampleEncoding = { format: header.format, bitsPerSample: header.bitsPerSample };
  let toDrop = opts.filter.delaySamples;

  /** False when the sink has had enough. */
  const filterAndEmit = async (n: number): Promise<boolean> => {
    if (mode !== "both") mixToMono(mode, decoded, n, mixed);
    filter.process(mixed, n, filtered);
    const drop = Math.min(toDrop, n);
    toDrop -= drop;
    if (n > drop)
      return (await sink(filtered.subarray(drop * channelsOut, n * channelsOut), n - drop)) !== false;
    return true;
  };

  // Read ahead: the next chunk is on its way (from the disk or the bucket) while this one is filtered.
  const readChunk = (start: number) => {
    const pending = source.read(
      header.dataOffset + start * header.blockAlign,
      Math.min(chunkFrames, header.frames - start) * header.blockAlign,
    );
    pending.catch(() => {}); // awaited below; this only keeps an early failure from going unheard
    return pending;
  };
  let next = header.frames > 0 ? readChunk(0) : null;
  for (let start = 0; start < header.frames; start += chunkFrames) {
    const n = Math.min(chunkFrames, header.frames - start);
    const bytes = await next!;
    next = start + chunkFrames < header.frames ? readChunk(start + chunkFrames) : null;
    if (bytes.length !== n * header.blockAlign) {
      throw new RenderError(
        `The transfer ended early: frame ${start + Math.floor(bytes.length / header.blockAlign)} ` +
          `of ${header.frames} (byte ${header.dataOffset + start * header.blockAlign + bytes.length}).`,
      );
    }
    dsp.decode(bytes, encoding, decoded);
    if (!(await filterAndEmit(n))) return;
    progress(start + n);
  }
  // Ring-out: the last delaySamples outputs depend on input beyond the end, taken as silence.
  for (let left = opts.filter.delaySamples; left > 0;) {
    const n = Math.min(chunkFrames, left);
    decoded.fill(0, 0, n * header.channels);
    if (!(await filterAndEmit(n))) return;
    left -= n;
  }
}

function toDb(linear: number): number {
  return linear > 0 ? 20 * Math.log10(linear) : -Infinity;
}

function modeWord(channels: number): string {
  return channels === 1 ? "mono" : "stereo";
}

/** Render the equalized access copy. See the file comment for the chain. */
export async function renderAccessCopy(opts: RenderOptions): Promise<RenderResult> {
  const { header, filter } = opts;
  const mode = opts.channelMode ?? "both";
  const output = opts.output ?? DEFAULT_OUTPUT;
  const ceilingDbfs = opts.ceilingDbfs ?? 0;
  if (!(ceilingDbfs <= 0))
    throw new RenderError(`The peak ceiling must be at most 0 dBFS, not ${ceilingDbfs}.`);
  if (filter.taps.length < 1) throw new RenderError("The render filter has no taps.");
  if (
    !Number.isInteger(filter.delaySamples) ||
    filter.delaySamples < 0 ||
    filter.delaySamples >= filter.taps.length
  ) {
    throw new RenderError(
      `The filter delay ${filter.delaySamples} is not a whole number of samples within its ${filter.taps.length} taps.`,
    );
  }
  const channelsOut = outputChannels(mode, header.channels);
  const dsp = opts.dsp ?? defaultDsp();
  const { blockSize } = convolverSizes(filter.taps.length); // the sizes both engines use
  const chunkFrames =
    opts.chunkFrames ?? Math.max(1, Math.round(TARGET_CHUNK_FRAMES / blockSize)) * blockSize;
  const outRate = opts.outputSampleRateHz ?? header.sampleRateHz;
  const resampled = outRate !== header.sampleRateHz;
  const outFrames = resampled
    ? Resampler.expectedFrames(header.frames, header.sampleRateHz, outRate)
    : header.frames;

  // Integer output keeps 2 LSB below the top code so the dither (< 1 LSB) and
  // rounding (≤ ½ LSB) cannot reach past it.
  const ceiling = 10 ** (ceilingDbfs / 20);
  const limit =
    output.format === "pcm"
      ? ceiling * (fullScalePositive(output) - 2 ** -(output.bitsPerSample - 1))
      : ceiling * (1 - 2 ** -24);

  const transferLine = formatCodingHistoryLine({
    algorithm: "PCM",
    samplingHz: header.sampleRateHz,
    wordLength: header.bitsPerSample,
    mode: modeWord(header.channels),
    text: `flat transfer${header.format === "float" ? "; IEEE float" : ""}`,
  });
  // Keep the transfer's own history (the capture chain) when it has one; otherwise describe it.
  const prior = header.bext?.codingHistory ?? "";
  const priorLines =
    prior === "" ? transferLine : prior.endsWith("\r\n") ? prior : `${prior.replace(/[\r\n]+$/, "")}\r\n`;
  const codingHistoryFor = (trimDb: number): string => {
    const eq = opts.equalization;
    const eqText = [
      eq ? eq.software : "Rillbook",
      eq ? `equalization ${eq.curve}` : "equalization",
      eq ? `speed ratio ${eq.speedRatio}` : null,
      `trim ${trimDb.toFixed(2)} dB`,
      CHANNEL_MODE_TEXT[mode],
      "delay-compensated FIR render filter",
      resampled ? `resampled from ${header.sampleRateHz} Hz (libsamplerate, best sinc)` : null,
      output.format === "pcm" ? "TPDF dither" : "float",
    ]
      .filter((s) => s !== null)
      .join("; ");
    return (
      priorLines +
      formatCodingHistoryLine({
        algorithm: "PCM",
        samplingHz: outRate,
        wordLength: output.bitsPerSample,
        mode: modeWord(channelsOut),
        text: eqText,
      })
    );
  };

  // Progress: one pass is planned; a second one (the trim) adds to the work left. Never goes back.
  const report = opts.onProgress ?? (() => {});
  let shown = 0;
  let passesPlanned = 1;
  const progress = (pass: number, fraction: number) => {
    const overall = Math.min(1, (pass - 1 + fraction) / passesPlanned);
    if (overall > shown) report((shown = overall));
  };

  const createWriter = (gain: number) =>
    BwfWriter.create(opts.outputPath, {
      sampleRateHz: outRate,
      channels: channelsOut,
      encoding: output,
      bext: { ...opts.bext, codingHistory: codingHistoryFor(toDb(gain)) },
      unicodeText: opts.unicodeText,
      ditherSeed: opts.ditherSeed,
      rf64ThresholdBytes: opts.rf64ThresholdBytes,
      dsp,
      expectedFrames: outFrames,
      // A render's file is a working copy that is stored elsewhere (the bucket) afterwards.
      sync: false,
    });

  /** The chain over the transfer, resampled when asked; `sink` as runChain's. */
  const filtered = async (
    passNumber: number,
    sink: (samples: Float64Array, frames: number) => Promise<boolean | void>,
  ) => {
    const resampler = resampled
      ? await Resampler.create(channelsOut, header.sampleRateHz, outRate, header.frames)
      : null;
    let more = true;
    await runChain(
      opts,
      dsp,
      mode,
      channelsOut,
      chunkFrames,
      async (samples, frames) => {
        if (!resampler) return (more = (await sink(samples, frames)) !== false);
        const out = resampler.process(samples.subarray(0, frames * channelsOut));
        return (more = (await sink(out, out.length / channelsOut)) !== false);
      },
      (done) => progress(passNumber, done / Math.max(1, header.frames)),
    );
    if (resampler && more) {
      const tail = resampler.finish();
      await sink(tail, tail.length / channelsOut);
    }
  };

  const spillPath = `${opts.outputPath}.filtered`;
  let spill: { handle: FileHandle; fromFrame: number; bytes: number } | null = null;
  try {
    // Pass 1: write at 0 dB while the peak allows; past that, measure (and keep the rest, if there is room).
    let writer: BwfWriter | null = await createWriter(1);
    let peak = 0;
    let emitted = 0;
    try {
      await filtered(1, async (samples, frames) => {
        if (frames === 0) return;
        const p = dsp.peak(samples, frames * channelsOut);
        if (p > peak) peak = p;
        if (writer && peak > limit) {
          // It needs a trim after all: stop writing, finish measuring, then pass 2.
          await writer.abort();
          writer = null;
          passesPlanned = 2;
          const need = (outFrames - emitted) * channelsOut * 8;
          if (opts.keepFiltered !== "never" && (await hasRoom(spillPath, need)))
            spill = { handle: await open(spillPath, "w+"), fromFrame: emitted, bytes: 0 };
        }
        if (writer) await writer.writeInterleaved(samples, frames, 1);
        else if (spill) {
          // The filtered samples as they are (float64), so pass 2 need not filter them again.
          const kept = spill as { handle: FileHandle; bytes: number };
          try {
            await kept.handle.write(
              new Uint8Array(samples.buffer, samples.byteOffset, frames * channelsOut * 8),
              0,
              frames * channelsOut * 8,
              kept.bytes,
            );
            kept.bytes += frames * channelsOut * 8;
          } catch {
            // The disk filled up after all (something else wrote to it): drop the working file and filter again in pass 2.
            await kept.handle.close().catch(() => {});
            await unlink(spillPath).catch(() => {});
            spill = null;
          }
        }
        emitted += frames;
      });
    } catch (error) {
      if (writer) await writer.abort();
      throw error;
    }
    let gain = 1;
    let written = writer ? await writer.close() : null;
    let secondPass: RenderResult["secondPass"] = null;

    if (!written) {
      // Pass 2: the trim. Filter again up to where pass 1 began to keep the samples; read the rest back.
      gain = limit / peak;
      const keptFrom = spill ? (spill as { fromFrame: number }).fromFrame : outFrames;
      const second = await createWriter(gain);
      try {
        let done = 0;
        let peak2 = 0;
        const put = async (samples: Float64Array, frames: number) => {
          const p = dsp.peak(samples, frames * channelsOut);
          if (p > peak2) peak2 = p;
          await second.writeInterleaved(samples, frames, gain);
          done += frames;
          progress(2, done / Math.max(1, outFrames));
        };
        if (keptFrom > 0) {
          await filtered(2, async (samples, frames) => {
            const take = Math.min(frames, keptFrom - done);
            if (take > 0) await put(samples, take);
            return done < keptFrom;
          });
        }
        if (spill) {
          const { handle } = spill as { handle: FileHandle };
          const buffer = new Float64Array(chunkFrames * channelsOut);
          const bytes = new Uint8Array(buffer.buffer);
          for (let at = 0; done < outFrames;) {
            const frames = Math.min(chunkFrames, outFrames - done);
            const { bytesRead } = await handle.read(bytes, 0, frames * channelsOut * 8, at);
            if (bytesRead !== frames * channelsOut * 8)
              throw new RenderError(`The render's working file ended early, at byte ${at + bytesRead}.`);
            at += bytesRead;
            await put(buffer, frames);
          }
        }
        if (done !== outFrames || peak2 > peak)
          throw new RenderError(
            `The second pass gave ${done} frames peaking at ${peak2}; the first ${outFrames} at ${peak}.`,
          );
        written = await second.close();
        secondPass = { filteredFrames: keptFrom, readBackFrames: outFrames - keptFrom };
      } catch (error) {
        await second.abort();
        throw error;
      }
    }

    // The writer hashed the file as it wrote it; it cannot have, only if the length came out other than planned.
    if (written.sha256 === null)
      throw new RenderError(`The access copy has ${written.frames} frames where ${outFrames} were planned.`);
    const sha256 = written.sha256;
    if (shown < 1) report((shown = 1));
    return {
      frames: written.frames,
      channels: channelsOut,
      peakDbfs: toDb(peak),
      outputPeakDbfs: toDb(peak * gain),
      trimDb: toDb(gain),
      clippedSamples: written.clippedSamples,
      sha256,
      outputBytes: written.bytes,
      container: written.container,
      codingHistory: codingHistoryFor(toDb(gain)),
      engine: dsp.name,
      secondPass,
    };
  } catch (error) {
    await unlink(opts.outputPath).catch(() => {});
    throw error;
  } finally {
    if (spill) {
      await (spill as { handle: FileHandle }).handle.close().catch(() => {});
      await unlink(spillPath).catch(() => {});
    }
  }
}

/**
 * Whether the folder of `path` has room for `bytes` more, keeping 5 % of the disk (at least
 * 256 MiB) free for everything else. Without room the trim's second pass filters again instead.
 */
async function hasRoom(path: string, bytes: number): Promise<boolean> {
  try {
    const fs = await statfs(dirname(path));
    const free = Number(fs.bavail) * Number(fs.bsize);
    const keep = Math.max(256 * 2 ** 20, 0.05 * Number(fs.blocks) * Number(fs.bsize));
    return free - bytes > keep;
  } catch {
    return false;
  }
}
