/**
 * Second-order sections: rows [b0, b1, b2, a0, a1, a2] with a0 = 1, the row
 * layout scipy.signal uses, so a cascade can be checked with sosfreqz as is.
 * Evaluation runs in the browser too (the curve editor plots it).
 */

export type SosRow = [number, number, number, number, number, number];

export interface SosResponse {
  hz: number[];
  gainDb: number[];
  /** Continuous (unwrapped along the given frequencies) phase in degrees. */
  phaseDeg: number[];
  re: number[];
  im: number[];
}

/** Complex response of the cascade at z = e^{jω}, ω = 2π·f/fs. */
export function sosComplexAt(
  sos: readonly SosRow[],
  hz: number,
  sampleRateHz: number,
): { re: number; im: number } {
  const w = (2 * Math.PI * hz) / sampleRateHz;
  const c1 = Math.cos(w);
  const s1 = Math.sin(w);
  const c2 = Math.cos(2 * w);
  const s2 = Math.sin(2 * w);
  let re = 1;
  let im = 0;
  for (const [b0, b1, b2, a0, a1, a2] of sos) {
    // z^-1 = e^{-jω} = cos ω − j sin ω
    const nr = b0 + b1 * c1 + b2 * c2;
    const ni = -(b1 * s1 + b2 * s2);
    const dr = a0 + a1 * c1 + a2 * c2;
    const di = -(a1 * s1 + a2 * s2);
    const dd = dr * dr + di * di;
    const hr = (nr * dr + ni * di) / dd;
    const hi = (ni * dr - nr * di) / dd;
    const tr = re * hr - im * hi;
    im = re * hi + im * hr;
    re = tr;
  }
  return { re, im };
}

/** Gain (dB) and phase (degrees) of the cascade at the given frequencies. */
export function sosResponse(
  sos: readonly SosRow[],
  frequenciesHz: ArrayLike<number>,
  sampleRateHz: number,
): SosResponse {
  const out: SosResponse = { hz: [], gainDb: [], phaseDeg: [], re: [], im: [] };
  let prev = 0;
  for (let i = 0; i < frequenciesHz.length; i++) {
    const { re, im } = sosComplexAt(sos, frequenciesHz[i], sampleRateHz);
    let ph = Math.atan2(im, re);
    if (i > 0) ph += 2 * Math.PI * Math.round((prev - ph) / (2 * Math.PI));
    prev = ph;
    out.hz.push(frequenciesHz[i]);
    out.gainDb.push(10 * Math.log10(re * re + im * im));
    out.phaseDeg.push((ph * 180) / Math.PI);
    out.re.push(re);
    out.im.push(im);
  }
  return out;
}

/** Run the cascade over a signal (direct form II transposed, float64). State is not kept between calls. */
export function sosFilter(sos: readonly SosRow[], input: ArrayLike<number>): Float64Array {
  const out = Float64Array.from(input);
  for (const [b0, b1, b2, a0, a1, a2] of sos) {
    let z1 = 0;
    let z2 = 0;
    const nb0 = b0 / a0,
      nb1 = b1 / a0,
      nb2 = b2 / a0,
      na1 = a1 / a0,
      na2 = a2 / a0;
    for (let n = 0; n < out.length; n++) {
      const x = out[n];
      const y = nb0 * x + z1;
      z1 = nb1 * x - na1 * y + z2;
      z2 = nb2 * x - na2 * y;
      out[n] = y;
    }
  }
  return out;
}
