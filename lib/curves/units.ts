/**
 * Conversions between the ways the trade writes a corner.
 *
 * f = 1 / (2π·τ): the corner is where the asymptotes of a first-order section
 * meet (DESIGN.md, "The curve model").
 * Rolloff quoted as attenuation R dB at 10 kHz: a single pole at τr gives
 * |H(10 kHz)|² = 1 / (1 + (2π·10 000·τr)²), hence
 * τr = sqrt(10^(R/10) − 1) / (2π·10 000) and R = 10·log10(1 + (2π·10 000·τr)²).
 */

const TWO_PI = 2 * Math.PI;
export const ROLLOFF_QUOTE_HZ = 10_000;

export function hzToUs(hz: number): number {
  return 1e6 / (TWO_PI * hz);
}

export function usToHz(tauUs: number): number {
  return 1e6 / (TWO_PI * tauUs);
}

/** Attenuation at 10 kHz (dB, ≥ 0) → rolloff time constant in µs. 0 dB gives 0 (no rolloff). */
export function db10kToUs(attenuationDb: number): number {
  return (Math.sqrt(Math.pow(10, attenuationDb / 10) - 1) / (TWO_PI * ROLLOFF_QUOTE_HZ)) * 1e6;
}

/** Rolloff time constant in µs → attenuation at 10 kHz (dB). */
export function usToDb10k(tauUs: number): number {
  const x = TWO_PI * ROLLOFF_QUOTE_HZ * tauUs * 1e-6;
  return 10 * Math.log10(1 + x * x);
}

export function dbToLinear(gainDb: number): number {
  return Math.pow(10, gainDb / 20);
}

export function linearToDb(gain: number): number {
  return 20 * Math.log10(gain);
}
