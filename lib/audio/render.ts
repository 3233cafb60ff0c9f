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
 *   keeping the filtered signal from that point: in a working file beside the
 *   output when the disk has room (the kernel's page cache holds it: the
 *   cheapest memory a process can fill, see lib/audio/README.md), else in memory
 *   up to a budget (`keepInMemoryBytes`, 1 GiB by default) and the rest on disk.
 *   Pass 2 writes with the trim: it filters the part before that point again
 *   (the same arithmetic, so the same samples) and takes the rest as kept, so
 *   for that part it only scales, dithers and encodes; without room anywhere it
 *   filters it all again, which takes longer.
 * - A trimmed copy of 16- or 24-bit PCM scales the filtered signal rounded to
 *   float32 (relative error under 2^-24: under half an LSB of 24-bit, far under
 *   the dither), so the signal is kept in 4 bytes a sample; every way of making
 *   the trimmed copy rounds so, hence writes the same bytes. A trimmed copy of
 *   32-bit PCM or float keeps (and scales) float64. The copy at 0 dB is never
 *   rounded: it is written from the filter's float64 output as it comes.
 *
 * Either way the copy is exactly what one filtering, one measured trim and one
 * dithered write give. The writer knows the length in advance, so the file's
 * SHA-256 is taken as it is written.
 *
 * In the code: `planRender` (options, sizes, limit, coding history, progress) →
 * `measurePass` (pass 1: read, filter, measure; write at 0 dB or keep the signal,
 * `KeptSignal`) → `trimPass` (pass 2, only with a trim: scale, dither, encode) →
 * `finishRender` (the result). `filterPass` and `runChain` are the filter both
 * passes share.
 *
 * The end of the signal is flushed with `delaySamples` zeros so the last
 * samples get their full response; output length = input length.
 * At another rate than the transfer's (the lab's choice), the filtered signal is
 * resampled after the equalization (lib/audio/resample.ts: libsamplerate's best sinc
 * converter, its delay compensated), before the peak is measured.
 *
 * Speed correction (`speedCorrection`, a disc cut at one speed and transferred at another):
 * the transfer's samples are taken at the rate they have when played at the cut speed,
 * rate × cut ÷ transfer, and the same resampler converts from that rate to the copy's, so
 * the copy has round(frames × transfer ÷ cut × out ÷ in) frames and the cut's pitch and
 * duration. The filter runs before it, at the transfer's rate, with the curve's corners at
 * the transfer's frequencies (speed ratio transfer ÷ cut); played at the cut speed they are
 * the cut's own. Filtering and resampling are both linear and time-invariant, so this is the
 * curve at the cut speed applied to the corrected transfer, and the filter is always designed
 * at a real rate (a 44.1 kHz transfer slowed by 70/78 would have no 20 kHz band to design in).
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
import { convolverSizes } from "./convolver";
import { defaultDsp } from "./dsp";
import type { DspEngine } from "./dsp";
import { Resampler } from "./resample";
import { BwfWriter } from "./writer";
import type { BwfWriteResult } from "./writer";

export interface EqualizationNote {
  /** The curve as the coding history should record it, e.g. "turnover 318 us; shelf 3180 us; rolloff 75 us; 0 dB at 1000 Hz". */
  curve: string;
  speedRatio: number;
  /** E.g. "Rillbook 0.1.0". */
  software: string;
}

/** The speeds of a speed-corrected render; the transfer is played at cut ÷ transfer of its speed. */
export interface SpeedCorrection {
  cutSpeedRpm: number;
  transferSpeedRpm: number;
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
  /**
   * Correct the speed: resample by cut ÷ transfer (lib/audio/resample.ts, the same converter as
   * another rate). The filter keeps the curve's corners at the transfer's frequencies (its speed
   * ratio transfer ÷ cut, which the render checks when `equalization` gives it).
   */
  speedCorrection?: SpeedCorrection;
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
  /**
   * The capture's own lines of coding history (EBU R98: the analogue source, then the A/D),
   * from the lab's equipment register. They take the place of the plain flat-transfer line;
   * a history the transfer's file carries itself follows them.
   */
  captureHistory?: string;
  /** Fraction done, 0…1, called after each chunk. */
  onProgress?: (fraction: number) => void;
  ditherSeed?: number;
  /** Test hook: RIFF size above which the output is closed as RF64 (default 4 GiB). */
  rf64ThresholdBytes?: number;
  /** Engine of the inner loops; default the native one where built (lib/audio/dsp.ts). */
  dsp?: DspEngine;
  /**
   * When a trim is needed, pass 1 keeps the filtered signal from where the peak passed the
   * ceiling, so pass 2 takes it as kept instead of filtering it again. "auto" (default): in a
   * working file beside the output if the disk has room, else in memory up to
   * `keepInMemoryBytes` and the rest on disk; "memory": in memory first, up to
   * `keepInMemoryBytes`, the rest on disk; "never": not kept, pass 2 filters again. The copy
   * is the same bytes every way.
   */
  keepFiltered?: "auto" | "memory" | "never";
  /** Memory the kept signal may take where it is kept in memory; default 1 GiB. */
  keepInMemoryBytes?: number;
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
  /**
   * With a trim: how pass 2 got its samples: frames filtered again, and frames kept by pass 1
   * (`readBackFrames`), of which `fromFileFrames` came back from the working file (the rest
   * from memory).
   */
  secondPass: { filteredFrames: number; readBackFrames: number; fromFileFrames: number } | null;
  /** With speed correction: the factor cut ÷ transfer and the rate the transfer was converted from. */
  speedCorrection: (SpeedCorrection & { factor: number; playedAtHz: number }) | null;
}

const DEFAULT_OUTPUT: SampleEncoding = { format: "pcm", bitsPerSample: 24 };
const TARGET_CHUNK_FRAMES = 65_536;
/** The kept signal's memory where it is kept in memory: 10 minutes of 96 kHz stereo float32 is 0.46 GB. */
export const DEFAULT_KEEP_IN_MEMORY_BYTES = 2 ** 30;
/** Memory for the kept signal is taken in blocks of this many bytes (or one chunk, if larger). */
const KEEP_BLOCK_BYTES = 16 * 2 ** 20;

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
 * exactly header.frames frames in all, with its peak magnitude, unless it answers
 * `false` (enough: the pass stops there). The array it gets is reused after it returns.
 */
async function runChain(
  opts: RenderOptions,
  dsp: DspEngine,
  mode: ChannelMode,
  channelsOut: 1 | 2,
  chunkFrames: number,
  sink: (samples: Float64Array, frames: number, peak: number) => Promise<boolean | void> | boolean | void,
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
    const drop = Math.min(toDrop, n);
    toDrop -= drop;
    // The filter measures the peak of what is kept as it writes it.
    const peak = filter.processPeak(mixed, n, filtered, drop);
    if (n > drop)
      return (await sink(filtered.subarray(drop * channelsOut, n * channelsOut), n - drop, peak)) !== false;
    return true;
  };

  // Read ahead: the next chunk is on its way (from the disk or the bucket) while this one is filtered.
  // A source that reads into buffers gets two, taking turns: a chunk is decoded before its
  // buffer's turn comes again, and the render allocates nothing per chunk.
  const buffers = source.readInto
    ? [new Uint8Array(chunkFrames * header.blockAlign), new Uint8Array(chunkFrames * header.blockAlign)]
    : null;
  const readChunk = (start: number) => {
    const offset = header.dataOffset + start * header.blockAlign;
    const length = Math.min(chunkFrames, header.frames - start) * header.blockAlign;
    let pending: Promise<Uint8Array>;
    if (buffers && source.readInto) {
      const buffer = buffers[(start / chunkFrames) % 2].subarray(0, length);
      pending = source.readInto(offset, buffer).then((got) => buffer.subarray(0, got));
    } else pending = source.read(offset, length);
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

/** What every pass of one render shares: the options, resolved, and the measures derived from them. */
interface RenderPlan {
  opts: RenderOptions;
  dsp: DspEngine;
  mode: ChannelMode;
  channelsOut: 1 | 2;
  chunkFrames: number;
  output: SampleEncoding;
  /** Rate of the access copy; `resampled` when it is not the rate the filtered signal is taken at (`inRate`). */
  outRate: number;
  /** The transfer's rate, or with speed correction its rate played at the cut speed (rate × cut ÷ transfer). */
  inRate: number;
  speed: RenderResult["speedCorrection"];
  resampled: boolean;
  /** Frames of the access copy. */
  outFrames: number;
  /** The largest filtered magnitude written at 0 dB: the ceiling, less room for dither and rounding on integer output. */
  limit: number;
  /** A trimmed copy scales the filtered signal rounded to float32 (16/24-bit PCM), else float64. */
  roundTo32: boolean;
  /** Memory the kept signal may take (bytes). */
  keepInMemoryBytes: number;
  /** The coding history of a copy written with this trim (dB). */
  codingHistoryFor: (trimDb: number) => string;
  /** Progress of pass `pass` (1 or 2) as a fraction of it; never goes back. */
  progress: (pass: number, fraction: number) => void;
  /** A second pass is needed after all: the passes left grow by one. */
  planSecondPass: () => void;
  /** Say 1 if not yet said. */
  progressDone: () => void;
}

/** Checks the options and works out the sizes, the peak limit, the coding history and the progress scale. */
function planRender(opts: RenderOptions): RenderPlan {
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
  const keepInMemoryBytes = opts.keepInMemoryBytes ?? DEFAULT_KEEP_IN_MEMORY_BYTES;
  if (!(keepInMemoryBytes >= 0 && Number.isFinite(keepInMemoryBytes)))
    throw new RenderError(
      `The memory for the kept signal must be a number of bytes, not ${keepInMemoryBytes}.`,
    );
  const dsp = opts.dsp ?? defaultDsp();
  const { blockSize } = convolverSizes(filter.taps.length); // the sizes both engines use
  const chunkFrames =
    opts.chunkFrames ?? Math.max(1, Math.round(TARGET_CHUNK_FRAMES / blockSize)) * blockSize;
  const outRate = opts.outputSampleRateHz ?? header.sampleRateHz;
  const speed = speedPlan(opts);
  const inRate = speed ? speed.playedAtHz : header.sampleRateHz;
  const resampled = outRate !== inRate;
  const outFrames = resampled ? Resampler.expectedFrames(header.frames, inRate, outRate) : header.frames;

  const progress = progressScale(opts.onProgress ?? (() => {}));
  return {
    opts,
    dsp,
    mode,
    channelsOut,
    chunkFrames,
    output,
    outRate,
    inRate,
    speed,
    resampled,
    outFrames,
    limit: peakLimit(output, ceilingDbfs),
    roundTo32: output.format === "pcm" && output.bitsPerSample <= 24,
    keepInMemoryBytes,
    codingHistoryFor: (trimDb) =>
      renderCodingHistory(opts, { mode, output, outRate, channelsOut, trimDb, speed }),
    ...progress,
  };
}

/** The speed correction asked for, checked against the curve's speed ratio; null when none. */
function speedPlan(opts: RenderOptions): RenderPlan["speed"] {
  const sc = opts.speedCorrection;
  if (!sc) return null;
  const { cutSpeedRpm: cut, transferSpeedRpm: transfer } = sc;
  if (!(cut > 0 && transfer > 0 && Number.isFinite(cut) && Number.isFinite(transfer)))
    throw new RenderError(
      `Speed correction needs two speeds above 0 rpm, not cut ${cut} and transfer ${transfer}.`,
    );
  const factor = cut / transfer;
  if (factor < 0.5 || factor > 2)
    throw new RenderError(
      `Correcting ${transfer} rpm to ${cut} rpm (×${factor}) is outside ×0.5–2: check the speeds.`,
    );
  const ratio = opts.equalization?.speedRatio;
  // The filter's corners sit where the transfer has them (transfer ÷ cut): corrected, they are the cut's.
  if (ratio !== undefined && Math.abs(ratio * factor - 1) > 1e-9)
    throw new RenderError(
      `The curve's speed ratio ${ratio} is not transfer ÷ cut (${transfer}/${cut}): the corrected copy would misplace its corners.`,
    );
  return {
    cutSpeedRpm: cut,
    transferSpeedRpm: transfer,
    factor,
    playedAtHz: opts.header.sampleRateHz * factor,
  };
}

/**
 * The largest filtered magnitude a copy may carry: the ceiling, and on integer output 2 LSB
 * below the top code so the dither (< 1 LSB) and rounding (≤ ½ LSB) cannot reach past it.
 */
function peakLimit(output: SampleEncoding, ceilingDbfs: number): number {
  const ceiling = 10 ** (ceilingDbfs / 20);
  return output.format === "pcm"
    ? ceiling * (fullScalePositive(output) - 2 ** -(output.bitsPerSample - 1))
    : ceiling * (1 - 2 ** -24);
}

/** Text as whole CR/LF-terminated lines of coding history. */
function crlfTerminated(history: string): string {
  return history.endsWith("\r\n") ? history : `${history.replace(/[\r\n]+$/, "")}\r\n`;
}

/** The access copy's coding history (EBU R98): the capture's lines (the register's, the file's own), then the equalization. */
function renderCodingHistory(
  opts: RenderOptions,
  copy: {
    mode: ChannelMode;
    output: SampleEncoding;
    outRate: number;
    channelsOut: 1 | 2;
    trimDb: number;
    speed: RenderPlan["speed"];
  },
): string {
  const { header } = opts;
  const { speed } = copy;
  const resampled = !speed && copy.outRate !== header.sampleRateHz;
  // Keep the transfer's own history (the capture chain) when it has one; otherwise describe it.
  const prior = header.bext?.codingHistory ?? "";
  const capture = opts.captureHistory ? crlfTerminated(opts.captureHistory) : "";
  const fileLines = prior === "" ? "" : crlfTerminated(prior);
  const priorLines = capture
    ? capture + fileLines
    : prior === ""
      ? formatCodingHistoryLine({
          algorithm: "PCM",
          samplingHz: header.sampleRateHz,
          wordLength: header.bitsPerSample,
          mode: modeWord(header.channels),
          text: `flat transfer${header.format === "float" ? "; IEEE float" : ""}`,
        })
      : prior.endsWith("\r\n")
        ? prior
        : `${prior.replace(/[\r\n]+$/, "")}\r\n`;
  const eq = opts.equalization;
  const eqText = [
    eq ? eq.software : "Rillbook",
    eq ? `equalization ${eq.curve}` : "equalization",
    eq ? `speed ratio ${eq.speedRatio}` : null,
    `trim ${copy.trimDb.toFixed(2)} dB`,
    CHANNEL_MODE_TEXT[copy.mode],
    "delay-compensated FIR render filter",
    resampled ? `resampled from ${header.sampleRateHz} Hz (libsamplerate, best sinc)` : null,
    speed
      ? `speed corrected from ${speed.transferSpeedRpm} to ${speed.cutSpeedRpm} rpm (x${speed.factor.toFixed(6)}; ` +
        `resampled from ${header.sampleRateHz} Hz played at ${speed.playedAtHz.toFixed(2)} Hz; libsamplerate, best sinc)`
      : null,
    copy.output.format === "pcm" ? "TPDF dither" : "float",
  ]
    .filter((s) => s !== null)
    .join("; ");
  return (
    priorLines +
    formatCodingHistoryLine({
      algorithm: "PCM",
      samplingHz: copy.outRate,
      wordLength: copy.output.bitsPerSample,
      mode: modeWord(copy.channelsOut),
      text: eqText,
    })
  );
}

/** Progress over the passes: one is planned; a second one (the trim) adds to the work left. Never goes back. */
function progressScale(
  report: (fraction: number) => void,
): Pick<RenderPlan, "progress" | "planSecondPass" | "progressDone"> {
  let shown = 0;
  let passesPlanned = 1;
  return {
    progress(pass, fraction) {
      const overall = Math.min(1, (pass - 1 + fraction) / passesPlanned);
      if (overall > shown) report((shown = overall));
    },
    planSecondPass() {
      passesPlanned = 2;
    },
    progressDone() {
      if (shown < 1) report((shown = 1));
    },
  };
}

/** A writer for the access copy at linear `gain`, its coding history saying so. */
function createWriter(plan: RenderPlan, gain: number): Promise<BwfWriter> {
  const { opts } = plan;
  return BwfWriter.create(opts.outputPath, {
    sampleRateHz: plan.outRate,
    channels: plan.channelsOut,
    encoding: plan.output,
    bext: { ...opts.bext, codingHistory: plan.codingHistoryFor(toDb(gain)) },
    unicodeText: opts.unicodeText,
    ditherSeed: opts.ditherSeed,
    rf64ThresholdBytes: opts.rf64ThresholdBytes,
    dsp: plan.dsp,
    expectedFrames: plan.outFrames,
    // A render's file is a working copy that is stored elsewhere (the bucket) afterwards.
    sync: false,
  });
}

/**
 * The filter: the chain over the transfer, resampled when asked. `sink` gets the aligned
 * output in order with its peak, as runChain's does, and may answer `false` to stop.
 */
async function filterPass(
  plan: RenderPlan,
  passNumber: number,
  sink: (samples: Float64Array, frames: number, peak: number) => Promise<boolean | void>,
): Promise<void> {
  const { opts, channelsOut } = plan;
  const { header } = opts;
  const resampler = plan.resampled
    ? await Resampler.create(channelsOut, plan.inRate, plan.outRate, header.frames)
    : null;
  let more = true;
  await runChain(
    opts,
    plan.dsp,
    plan.mode,
    channelsOut,
    plan.chunkFrames,
    async (samples, frames, peak) => {
      if (!resampler) return (more = (await sink(samples, frames, peak)) !== false);
      const out = resampler.process(samples.subarray(0, frames * channelsOut));
      return (more = (await sink(out, out.length / channelsOut, plan.dsp.peak(out, out.length))) !== false);
    },
    (done) => plan.progress(passNumber, done / Math.max(1, header.frames)),
  );
  if (resampler && more) {
    const tail = resampler.finish();
    await sink(tail, tail.length / channelsOut, plan.dsp.peak(tail, tail.length));
  }
}

type Samples = Float32Array | Float64Array;

/** A Float32Array or Float64Array of `length`, as the kept signal's precision asks. */
function samplesOf(roundTo32: boolean, length: number): Samples {
  return roundTo32 ? new Float32Array(length) : new Float64Array(length);
}

/**
 * `samples` as a trimmed copy scales them, in `into` (grown as needed): rounded to float32 for
 * 16/24-bit PCM, else copied as they are. Answers their peak (of the float64 values, as
 * measured) and the array holding them.
 */
function asKept(
  plan: RenderPlan,
  samples: Float64Array,
  count: number,
  into: Samples,
): { peak: number; kept: Samples } {
  if (plan.roundTo32) {
    const out = into as Float32Array;
    return { peak: plan.dsp.peak(samples, count, out), kept: out };
  }
  (into as Float64Array).set(samples.subarray(0, count));
  return { peak: plan.dsp.peak(samples, count), kept: into };
}

/**
 * The filtered signal from frame `fromFrame` of the output on, as a trimmed copy scales it
 * (float32 for 16/24-bit PCM, else float64): in memory up to its budget (none, by default, when
 * the disk has room), the rest in a working file beside the access copy (the render's own
 * temporary folder, removed with it).
 */
class KeptSignal {
  /** The kept frames in memory, in order, each piece a view of a block. */
  private pieces: Samples[] = [];
  private blocks: ArrayBuffer[] = [];
  private block: Samples | null = null;
  private blockUsed = 0;
  private memoryBytes = 0;
  private handle: FileHandle | null = null;
  private fileBytes = 0;
  private staging: Samples;
  private readonly bytesPerSample: number;

  private constructor(
    private readonly plan: RenderPlan,
    private readonly path: string,
    readonly fromFrame: number,
    /** Memory this signal may take before the rest goes to the working file. */
    private readonly memoryBudget: number,
  ) {
    this.bytesPerSample = plan.roundTo32 ? 4 : 8;
    this.staging = samplesOf(plan.roundTo32, 0);
  }

  /**
   * Somewhere to keep the rest of the signal: the working file when the disk has room (or, with
   * "memory", memory first), memory up to the budget and the disk for the rest otherwise; else
   * null (pass 2 filters again).
   */
  static async open(plan: RenderPlan, fromFrame: number): Promise<KeptSignal | null> {
    const way = plan.opts.keepFiltered ?? "auto";
    if (way === "never") return null;
    const path = `${plan.opts.outputPath}.filtered`;
    const need = (plan.outFrames - fromFrame) * plan.channelsOut * (plan.roundTo32 ? 4 : 8);
    const memory = way === "auto" && (await hasRoom(path, need)) ? 0 : plan.keepInMemoryBytes;
    if (memory > 0 && need > memory && !(await hasRoom(path, need - memory))) return null;
    return new KeptSignal(plan, path, fromFrame, memory);
  }

  /** Frames kept in the working file. */
  get fileFrames(): number {
    return this.fileBytes / (this.bytesPerSample * this.plan.channelsOut);
  }

  /**
   * Keeps the next `frames` frames (rounding them to float32 for 16/24-bit PCM as it goes);
   * answers their peak, or null when the disk filled up after all (something else wrote to
   * it): then everything kept is dropped.
   */
  async append(samples: Float64Array, frames: number): Promise<number | null> {
    const count = frames * this.plan.channelsOut;
    const room = this.memoryFor(count);
    if (room) {
      const { peak } = asKept(this.plan, samples, count, room);
      this.pieces.push(room);
      return peak;
    }
    if (this.staging.length < count) this.staging = samplesOf(this.plan.roundTo32, count);
    const { peak, kept } = asKept(this.plan, samples, count, this.staging);
    const length = count * this.bytesPerSample;
    try {
      this.handle ??= await open(this.path, "w+");
      await this.handle.write(
        new Uint8Array(kept.buffer, kept.byteOffset, length),
        0,
        length,
        this.fileBytes,
      );
      this.fileBytes += length;
      return peak;
    } catch {
      await this.discard();
      return null;
    }
  }

  /** A view for `count` samples in memory, within the budget; null once the budget is spent. */
  private memoryFor(count: number): Samples | null {
    if (this.handle || this.fileBytes > 0) return null; // once spilled, the rest goes to the file, in order
    if (this.block && this.block.length - this.blockUsed >= count) {
      const view = this.block.subarray(this.blockUsed, this.blockUsed + count);
      this.blockUsed += count;
      return view;
    }
    const left = this.memoryBudget - this.memoryBytes;
    const samples = Math.min(
      Math.max(count, KEEP_BLOCK_BYTES / this.bytesPerSample),
      Math.floor(left / this.bytesPerSample),
    );
    if (samples < count) return null;
    const buffer = this.plan.dsp.allocate(samples * this.bytesPerSample);
    this.blocks.push(buffer);
    this.block = this.plan.roundTo32 ? new Float32Array(buffer) : new Float64Array(buffer);
    this.memoryBytes += samples * this.bytesPerSample;
    this.blockUsed = count;
    return this.block.subarray(0, count);
  }

  /**
   * Hands the kept frames to `sink` in order: those in memory as they are (each let go once
   * handed over), then those in the working file, read back `chunkFrames` at a time into one
   * reused array. Answers the frames handed over.
   */
  async readBack(
    chunkFrames: number,
    sink: (samples: Samples, frames: number) => Promise<void>,
  ): Promise<number> {
    const channels = this.plan.channelsOut;
    let total = 0;
    this.block = null;
    for (let piece = this.pieces.shift(); piece; piece = this.pieces.shift()) {
      await sink(piece, piece.length / channels);
      total += piece.length / channels;
      // A block goes back once its last piece is written.
      if (this.pieces[0]?.buffer !== piece.buffer) this.releaseBlock(piece.buffer as ArrayBuffer);
    }
    if (this.fileBytes === 0) return total;
    if (!this.handle) throw new RenderError("The render's working file is gone.");
    const buffer = samplesOf(this.plan.roundTo32, chunkFrames * channels);
    const bytes = new Uint8Array(buffer.buffer);
    const frameBytes = channels * this.bytesPerSample;
    let at = 0;
    for (let done = 0; done < this.fileFrames;) {
      const frames = Math.min(chunkFrames, this.fileFrames - done);
      const { bytesRead } = await this.handle.read(bytes, 0, frames * frameBytes, at);
      if (bytesRead !== frames * frameBytes)
        throw new RenderError(`The render's working file ended early, at byte ${at + bytesRead}.`);
      at += bytesRead;
      await sink(buffer, frames);
      done += frames;
    }
    return total + this.fileFrames;
  }

  private releaseBlock(buffer: ArrayBuffer): void {
    const at = this.blocks.indexOf(buffer);
    if (at >= 0) this.blocks.splice(at, 1);
    this.plan.dsp.release(buffer);
  }

  /** Gives the memory back, and closes and removes the working file. */
  async discard(): Promise<void> {
    this.pieces = [];
    this.block = null;
    for (const buffer of this.blocks) this.plan.dsp.release(buffer);
    this.blocks = [];
    const handle = this.handle;
    this.handle = null;
    this.fileBytes = 0;
    if (handle) await handle.close().catch(() => {});
    await unlink(this.path).catch(() => {});
  }
}

interface Measured {
  /** Peak magnitude of the filtered signal. */
  peak: number;
  /** The copy at 0 dB when the whole signal fitted under the limit, else null (a trim is needed). */
  written: BwfWriteResult | null;
  /** The filtered signal kept from where the peak passed the limit, when there was room. */
  kept: KeptSignal | null;
}

/**
 * Pass 1, read and measure: filters the transfer and measures its peak, writing the copy at
 * 0 dB while the peak allows; once it passes the limit, stops writing and measures on,
 * keeping the rest of the filtered signal (if there is room) for pass 2.
 */
async function measurePass(plan: RenderPlan): Promise<Measured> {
  const { limit } = plan;
  let writer: BwfWriter | null = await createWriter(plan, 1);
  let kept: KeptSignal | null = null;
  let peak = 0;
  let emitted = 0;
  try {
    await filterPass(plan, 1, async (samples, frames, p) => {
      if (frames === 0) return;
      if (kept && (await kept.append(samples, frames)) === null) kept = null;
      if (p > peak) peak = p;
      if (writer && peak > limit) {
        // It needs a trim after all: stop writing, finish measuring, then pass 2.
        await writer.abort();
        writer = null;
        plan.planSecondPass();
        kept = await KeptSignal.open(plan, emitted);
        if (kept && (await kept.append(samples, frames)) === null) kept = null;
      } else if (writer) await writer.writeInterleaved(samples, frames, 1);
      emitted += frames;
    });
    const written = writer ? await writer.close() : null;
    return { peak, written, kept };
  } catch (error) {
    if (writer) await writer.abort();
    if (kept) await (kept as KeptSignal).discard();
    throw error;
  }
}

/**
 * Pass 2, scale, dither and encode: writes the copy with the trim. The part before the kept
 * signal is filtered again (the same arithmetic, so the same samples: its frame count and peak
 * are checked) and rounded as the kept signal was; the kept signal is taken as it was kept.
 */
async function trimPass(
  plan: RenderPlan,
  measured: Measured,
): Promise<{ written: BwfWriteResult; gain: number; secondPass: NonNullable<RenderResult["secondPass"]> }> {
  const { channelsOut, outFrames } = plan;
  const { peak, kept } = measured;
  const gain = plan.limit / peak;
  const keptFrom = kept ? kept.fromFrame : outFrames;
  const writer = await createWriter(plan, gain);
  try {
    let done = 0;
    let peakAgain = 0;
    const put = async (samples: Samples, frames: number) => {
      await writer.writeInterleaved(samples, frames, gain);
      done += frames;
      plan.progress(2, done / Math.max(1, outFrames));
    };
    if (keptFrom > 0) {
      let rounded = samplesOf(plan.roundTo32, plan.chunkFrames * channelsOut);
      await filterPass(plan, 2, async (samples, frames) => {
        const take = Math.min(frames, keptFrom - done);
        if (take > 0) {
          if (rounded.length < take * channelsOut) rounded = samplesOf(plan.roundTo32, take * channelsOut);
          const again = asKept(plan, samples, take * channelsOut, rounded);
          if (again.peak > peakAgain) peakAgain = again.peak;
          await put(again.kept, take);
        }
        return done < keptFrom;
      });
    }
    const fromFileFrames = kept ? kept.fileFrames : 0;
    if (kept) await kept.readBack(plan.chunkFrames, put);
    if (done !== outFrames || peakAgain > peak)
      throw new RenderError(
        `The second pass gave ${done} frames peaking at ${peakAgain}; the first ${outFrames} at ${peak}.`,
      );
    return {
      written: await writer.close(),
      gain,
      secondPass: { filteredFrames: keptFrom, readBackFrames: outFrames - keptFrom, fromFileFrames },
    };
  } catch (error) {
    await writer.abort();
    throw error;
  }
}

/** The result: what was written, at what trim, by which engine. */
function finishRender(
  plan: RenderPlan,
  peak: number,
  gain: number,
  written: BwfWriteResult,
  secondPass: RenderResult["secondPass"],
): RenderResult {
  // The writer hashed the file as it wrote it; it cannot have, only if the length came out other than planned.
  if (written.sha256 === null)
    throw new RenderError(
      `The access copy has ${written.frames} frames where ${plan.outFrames} were planned.`,
    );
  plan.progressDone();
  return {
    frames: written.frames,
    channels: plan.channelsOut,
    peakDbfs: toDb(peak),
    outputPeakDbfs: toDb(peak * gain),
    trimDb: toDb(gain),
    clippedSamples: written.clippedSamples,
    sha256: written.sha256,
    outputBytes: written.bytes,
    container: written.container,
    codingHistory: plan.codingHistoryFor(toDb(gain)),
    engine: plan.dsp.name,
    secondPass,
    speedCorrection: plan.speed,
  };
}

/** Render the equalized access copy. See the file comment for the chain and its passes. */
export async function renderAccessCopy(opts: RenderOptions): Promise<RenderResult> {
  const plan = planRender(opts);
  let kept: KeptSignal | null = null;
  try {
    const measured = await measurePass(plan);
    kept = measured.kept;
    if (measured.written) return finishRender(plan, measured.peak, 1, measured.written, null);
    const { written, gain, secondPass } = await trimPass(plan, measured);
    return finishRender(plan, measured.peak, gain, written, secondPass);
  } catch (error) {
    await unlink(opts.outputPath).catch(() => {});
    throw error;
  } finally {
    await kept?.discard();
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
