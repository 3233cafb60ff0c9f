/**
 * mulberry32 (Tommy Ettinger's 32-bit generator): small, fast and deterministic from its
 * seed, which is all the app asks of it. The render's TPDF dither steps it (and so does
 * the native encoder, through the same 32-bit state); the demo seed and the test corpus
 * draw reproducible values from it. Not for anything secret.
 */

/** mulberry32's step: the generator adds this to its 32-bit state before each draw. */
export const MULBERRY_STEP = 0x6d2b79f5;

/** mulberry32's output for a state, as a fraction in [0, 1). */
export function mulberry32(state: number): number {
  let t = Math.imul(state ^ (state >>> 15), state | 1);
  t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
  return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
}

/** mulberry32 as a generator: the same sequence for the same seed, every time. */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => mulberry32((a = (a + MULBERRY_STEP) >>> 0));
}
