/**
 * The render's inner loops, in two engines that compute the same thing:
 *
 * - native: native/dsp, a small Node-API addon in C over FFTW 3 (Debian's
 *   libfftw3, double precision), built by the two commands (scripts/lib/ensure.sh);
 * - JavaScript: lib/audio/codecs.ts and lib/audio/convolver.ts (fft.js).
 *
 * Both decode the same samples, draw the same dither sequence and round the same
 * way, so they write the same bytes; their filters agree to float64 round-off
 * (tests/unit/audio-dsp.test.ts holds them to that). The native engine is the
 * default wherever it has been built; the JavaScript one is the fallback (a
 * machine without a compiler), about 3 times slower (lib/audio/README.md has the
 * figures; scripts/bench/render.ts measures it). A render reports which
 * engine ran, and the render event records it.
 */
import { renameSync, rmSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { convolverSizes, PairConvolver, StreamingConvolver } from "./convolver";
import { decodeInterleaved, encodeInterleavedPcm } from "./codecs";
import type { SampleEncoding } from "./codecs";

/** An FIR filter with state carried across calls, on interleaved frames. */
export interface FrameFilter {
  readonly channels: 1 | 2;
  /** New frames per FFT: feed multiples of this for best speed. */
  readonly blockSize: number;
  /** Filter the next `frames` frames of `input` into `output` (may be the same array). */
  process(input: Float64Array, frames: number, output: Float64Array): void;
  /** The same, answering the peak magnitude of the output from frame `peakFrom` on (as `peak` measures it). */
  processPeak(input: Float64Array, frames: number, output: Float64Array, peakFrom: number): number;
}

export interface DspEngine {
  /** For the render's report and event, e.g. "native (fftw-3.3.10)". */
  readonly name: string;
  /** Interleaved file samples → interleaved float64 (full scale 1.0); returns the sample count. */
  decode(bytes: Uint8Array, encoding: SampleEncoding, out: Float64Array): number;
  /**
   * Interleaved samples → integer PCM with optional TPDF dither state; returns the clipped count.
   * Float32 samples are widened exactly, so they encode as a Float64Array holding the same values.
   */
  encodePcm(
    samples: Float64Array | Float32Array,
    count: number,
    gain: number,
    bitsPerSample: number,
    dither: Uint32Array | null,
    out: Uint8Array,
  ): number;
  /**
   * Largest magnitude among the first `count` samples (NaN passed over); with `out32`, also
   * writes those samples rounded to float32 (to nearest) into it, in the same sweep.
   */
  peak(samples: Float64Array, count: number, out32?: Float32Array): number;
  filter(taps: ArrayLike<number>, channels: 1 | 2): FrameFilter;
  /**
   * Memory for a trimmed render's kept signal (the native engine's comes in huge pages where the
   * kernel offers them: far fewer page faults). Its contents are undefined until written.
   */
  allocate(bytes: number): ArrayBuffer;
  /** Gives memory from `allocate` back now; the buffer is detached (length 0) from then on. */
  release(buffer: ArrayBuffer): void;
}

export const jsDsp: DspEngine = {
  name: "JavaScript (fft.js)",
  decode: decodeInterleaved,
  encodePcm: encodeInterleavedPcm,
  peak(samples, count, out32) {
    let peak = 0;
    for (let i = 0; i < count; i++) {
      const a = Math.abs(samples[i]);
      if (a > peak) peak = a;
    }
    if (out32) {
      if (out32.length < count) throw new RangeError("peak: out32 is shorter than count.");
      out32.set(samples.subarray(0, count));
    }
    return peak;
  },
  allocate: (bytes) => new ArrayBuffer(bytes),
  release: () => {}, // the garbage collector's
  filter(taps, channels) {
    let process: FrameFilter["process"];
    if (channels === 2) {
      const pair = new PairConvolver(taps);
      process = (input, frames, output) => pair.processInterleaved(input, frames, output);
    } else {
      const single = new StreamingConvolver(taps);
      process = (input, frames, output) => single.processInto(input, frames, output);
    }
    return {
      channels,
      blockSize: convolverSizes(taps.length).blockSize,
      process,
      processPeak: (input, frames, output, peakFrom) => {
        process(input, frames, output);
        const from = Math.min(peakFrom, frames) * channels;
        return jsDsp.peak(output.subarray(from), frames * channels - from);
      },
    };
  },
};

interface NativeModule {
  decode(bytes: Uint8Array, bits: number, isFloat: boolean, out: Float64Array): void;
  encode(
    samples: Float64Array | Float32Array,
    count: number,
    gain: number,
    bits: number,
    dither: Uint32Array | null,
    out: Uint8Array,
  ): number;
  peak(samples: Float64Array, count: number, out32?: Float32Array): number;
  importWisdom(path: string): boolean;
  exportWisdom(path: string): boolean;
  unsavedPlans(): number;
  allocate(bytes: number): ArrayBuffer;
  release(buffer: ArrayBuffer): void;
  Convolver: new (
    taps: Float64Array,
    channels: number,
    fftSize: number,
  ) => {
    process(input: Float64Array, frames: number, output: Float64Array): void;
    process(input: Float64Array, frames: number, output: Float64Array, peakFrom: number): number;
  };
  fftwVersion: string;
}

/** Where the two commands build the addon, from this file (lib/audio) or the repository root. */
function addonPaths(): string[] {
  const rel = join("native", "dsp", "build", "Release", "rillbook_dsp.node");
  const paths = [join(process.cwd(), rel)];
  try {
    paths.unshift(join(dirname(fileURLToPath(import.meta.url)), "..", "..", rel));
  } catch {
    // Bundled code has no file URL of its own; the working directory's copy serves.
  }
  return paths;
}

/**
 * FFTW's measured plans for the addon at `addonPath`, kept in a file beside it (its build
 * folder, so a rebuild starts afresh): read at load, written after a convolver of a new size
 * was planned. Written to a temporary name and renamed, so a process never reads half a file;
 * where the folder is not writable, plans are measured once per process instead.
 */
function wisdomKeeper(mod: NativeModule, addonPath: string): () => void {
  const path = join(dirname(addonPath), "..", "fftw-wisdom");
  mod.importWisdom(path);
  return () => {
    if (mod.unsavedPlans() === 0) return;
    const temporary = `${path}.${process.pid}.tmp`;
    try {
      if (mod.exportWisdom(temporary)) renameSync(temporary, path);
    } catch {
      rmSync(temporary, { force: true });
    }
  };
}

function wrapNative(mod: NativeModule, saveWisdom: () => void): DspEngine {
  return {
    name: `native (${mod.fftwVersion})`,
    decode(bytes, encoding, out) {
      const width = encoding.bitsPerSample / 8;
      mod.decode(bytes, encoding.bitsPerSample, encoding.format === "float", out);
      return Math.floor(bytes.length / width);
    },
    encodePcm(samples, count, gain, bits, dither, out) {
      return mod.encode(samples, count, gain, bits, dither, out);
    },
    peak: (samples, count, out32) => mod.peak(samples, count, out32),
    allocate: (bytes) => mod.allocate(bytes),
    release: (buffer) => mod.release(buffer),
    filter(taps, channels) {
      const { fftSize, blockSize } = convolverSizes(taps.length);
      const conv = new mod.Convolver(Float64Array.from(taps), channels, fftSize);
      saveWisdom();
      return {
        channels,
        blockSize,
        process: (input, frames, output) => conv.process(input, frames, output),
        processPeak: (input, frames, output, peakFrom) => conv.process(input, frames, output, peakFrom),
      };
    },
  };
}

let loaded: { engine: DspEngine | null; error: string | null } | null = null;

function load(): { engine: DspEngine | null; error: string | null } {
  if (loaded) return loaded;
  const problems: string[] = [];
  for (const path of addonPaths()) {
    try {
      // process.dlopen rather than require: the same loading, but no bundler tries to follow the path.
      const addon = { exports: {} as NativeModule };
      process.dlopen(addon, path);
      loaded = { engine: wrapNative(addon.exports, wisdomKeeper(addon.exports, path)), error: null };
      return loaded;
    } catch (error) {
      problems.push(`${path}: ${(error as Error).message.split("\n")[0]}`);
    }
  }
  loaded = {
    engine: null,
    error: `The native render engine is not built (${problems.join("; ")}). Run npm start or npm test to build it.`,
  };
  return loaded;
}

/** The native engine, or null when it is not built here. */
export function nativeDsp(): DspEngine | null {
  return load().engine;
}

/** Why the native engine is missing, or null. */
export function nativeDspProblem(): string | null {
  return load().error;
}

let warned = false;

/** The engine a render uses unless told otherwise: native where built, else JavaScript (said once on stderr). */
export function defaultDsp(): DspEngine {
  const native = nativeDsp();
  if (native) return native;
  if (!warned) {
    warned = true;
    console.warn(`[rillbook] ${nativeDspProblem()} Rendering with the slower JavaScript engine.`);
  }
  return jsDsp;
}
