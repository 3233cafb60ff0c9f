/**
 * Sample-rate conversion of the filtered signal for access copies at another rate than
 * the transfer, with libsamplerate's best sinc converter (the maintained WebAssembly
 * build, @alexanderolsen/libsamplerate-js). libsamplerate aligns its output with its
 * input (its own delay is compensated) and holds back the last samples until more input
 * arrives; `finish()` feeds silence until the whole signal is out and cuts the output to
 * round(frames × out/in). The converter works in float32 (about −150 dB of rounding:
 * below a 24-bit copy's own step).
 */
import srcPkg from "@alexanderolsen/libsamplerate-js";

type Converter = Awaited<ReturnType<typeof srcPkg.create>>;

export class Resampler {
  private written = 0;
  private constructor(
    private readonly src: Converter,
    readonly channels: number,
    readonly expectedFrames: number,
  ) {}

  static async create(channels: number, inputRateHz: number, outputRateHz: number, inputFrames: number): Promise<Resampler> {
    const src = await srcPkg.create(channels, inputRateHz, outputRateHz, { converterType: srcPkg.ConverterType.SRC_SINC_BEST_QUALITY });
    return new Resampler(src, channels, Resampler.expectedFrames(inputFrames, inputRateHz, outputRateHz));
  }

  /** Frames out for `inputFrames` frames in: round(frames × out/in). */
  static expectedFrames(inputFrames: number, inputRateHz: number, outputRateHz: number): number {
    return Math.round((inputFrames * outputRateHz) / inputRateHz);
  }

  /** Converts the next block (per-channel arrays of equal length); returns what is ready, per channel. */
  process(block: Float64Array[]): Float64Array[] {
    const n = block[0].length;
    const interleaved = new Float32Array(n * this.channels);
    for (let c = 0; c < this.channels; c++) for (let i = 0; i < n; i++) interleaved[i * this.channels + c] = block[c][i];
    return this.take(this.src.full(interleaved));
  }

  /** Flushes the held-back tail with silence; after this the output totals `expectedFrames`. */
  finish(): Float64Array[] {
    const parts: Float64Array[][] = [];
    let guard = 0;
    while (this.written < this.expectedFrames && guard++ < 64) parts.push(this.take(this.src.full(new Float32Array(4096 * this.channels))));
    this.src.destroy();
    return Array.from({ length: this.channels }, (_, c) => {
      const len = parts.reduce((a, p) => a + p[c].length, 0);
      const out = new Float64Array(len);
      let at = 0;
      for (const p of parts) {
        out.set(p[c], at);
        at += p[c].length;
      }
      return out;
    });
  }

  private take(interleaved: Float32Array): Float64Array[] {
    const available = interleaved.length / this.channels;
    const n = Math.max(0, Math.min(available, this.expectedFrames - this.written));
    this.written += n;
    return Array.from({ length: this.channels }, (_, c) => {
      const out = new Float64Array(n);
      for (let i = 0; i < n; i++) out[i] = interleaved[i * this.channels + c];
      return out;
    });
  }
}
