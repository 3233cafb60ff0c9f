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

  static async create(
    channels: number,
    inputRateHz: number,
    outputRateHz: number,
    inputFrames: number,
  ): Promise<Resampler> {
    const src = await srcPkg.create(channels, inputRateHz, outputRateHz, {
      converterType: srcPkg.ConverterType.SRC_SINC_BEST_QUALITY,
    });
    return new Resampler(src, channels, Resampler.expectedFrames(inputFrames, inputRateHz, outputRateHz));
  }

  /** Frames out for `inputFrames` frames in: round(frames × out/in). */
  static expectedFrames(inputFrames: number, inputRateHz: number, outputRateHz: number): number {
    return Math.round((inputFrames * outputRateHz) / inputRateHz);
  }

  /** Converts the next block of interleaved frames; returns what is ready, interleaved. */
  process(samples: Float64Array): Float64Array {
    return this.take(this.src.full(Float32Array.from(samples)));
  }

  /** Flushes the held-back tail with silence; after this the output totals `expectedFrames`. */
  finish(): Float64Array {
    const parts: Float64Array[] = [];
    let guard = 0;
    while (this.written < this.expectedFrames && guard++ < 64)
      parts.push(this.take(this.src.full(new Float32Array(4096 * this.channels))));
    this.src.destroy();
    const out = new Float64Array(parts.reduce((a, p) => a + p.length, 0));
    let at = 0;
    for (const p of parts) {
      out.set(p, at);
      at += p.length;
    }
    return out;
  }

  private take(interleaved: Float32Array): Float64Array {
    const n = Math.max(0, Math.min(interleaved.length / this.channels, this.expectedFrames - this.written));
    this.written += n;
    return Float64Array.from(interleaved.subarray(0, n * this.channels));
  }
}
