/**
 * Sample-rate conversion of the filtered signal for access copies at another rate than
 * the transfer, with libsamplerate's best sinc converter (the maintained WebAssembly
 * build, @alexanderolsen/libsamplerate-js). libsamplerate aligns its output with its
 * input (its own delay is compensated) and holds back the last samples until more input
 * arrives; `finish()` feeds silence until the whole signal is out and cuts the output to
 * round(frames × out/in). The converter works in float32 (about −150 dB of rounding:
 * below a 24-bit copy's own step).
 *
 * libsamplerate-js takes whole rates of 1–192 000 Hz; only their ratio matters to the
 * converter. A speed-corrected render converts from the rate the transfer has when it is
 * played at the cut speed (rate × cut ÷ transfer, seldom a whole number), so the two rates
 * are handed over as the smallest whole pair with their ratio (`wholeRates`).
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
    const [whole, wholeOut] = wholeRates(inputRateHz, outputRateHz);
    const src = await srcPkg.create(channels, whole, wholeOut, {
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

const MAX_WHOLE_RATE = 192_000;

/**
 * Two whole rates of at most 192 000 Hz with the ratio out ÷ in: the rates themselves when
 * they are whole and in range, else the nearest fraction (continued fractions) with terms
 * in range, e.g. 98 461.538… → 96 000 Hz (a 96 kHz transfer of an 80 rpm disc played at
 * 78 rpm, corrected) is 40 → 39.
 */
export function wholeRates(inputRateHz: number, outputRateHz: number): [number, number] {
  if (!(inputRateHz > 0 && outputRateHz > 0))
    throw new RangeError(`Sample rates must be above 0 Hz, not ${inputRateHz} and ${outputRateHz}.`);
  const whole = (r: number) => Number.isInteger(r) && r <= MAX_WHOLE_RATE;
  if (whole(inputRateHz) && whole(outputRateHz)) return [inputRateHz, outputRateHz];
  const x = outputRateHz / inputRateHz;
  // Convergents p/q of x; the last one with both terms in range.
  let [p0, q0, p1, q1] = [0, 1, 1, 0];
  let best: [number, number] = [1, Math.max(1, Math.round(x))];
  let rest = x;
  for (let i = 0; i < 64; i++) {
    const a = Math.floor(rest);
    const p2 = a * p1 + p0;
    const q2 = a * q1 + q0;
    if (p2 > MAX_WHOLE_RATE || q2 > MAX_WHOLE_RATE) break;
    best = [q2, p2];
    [p0, q0, p1, q1] = [p1, q1, p2, q2];
    const frac = rest - a;
    if (Math.abs(p2 / q2 - x) <= 1e-15 * x || frac < 1e-12) break;
    rest = 1 / frac;
  }
  const [q, p] = best;
  if (q < 1 || p < 1) throw new RangeError(`No whole pair of rates has the ratio ${x}.`);
  return [q, p];
}
