import { describe, expect, it } from "vitest";
import { analogGainDb, analogModel, asymptotes, peakGain, RIAA_SPEC } from "@/lib/curves";

describe("analog curve", () => {
  it("gives RIAA's straight-line breakpoints and slopes", () => {
    // RIAA asymptotes: flat below 50 Hz, −20 dB/decade 50–500 Hz, flat 500–2122 Hz,
    // −20 dB/decade above (f = 1/(2πτ) of 3180, 318, 75 µs; common practice).
    const a = asymptotes(analogModel(RIAA_SPEC));
    expect(a.corners.map((c) => c.parameter)).toEqual(["shelf", "turnover", "rolloff"]);
    expect(a.corners[0].hz).toBeCloseTo(50.05, 2);
    expect(a.corners[1].hz).toBeCloseTo(500.5, 1);
    expect(a.corners[2].hz).toBeCloseTo(2122.1, 1);
    expect(a.segments.map((s) => s.slopeDbPerDecade)).toEqual([0, -20, 0, -20]);
    // Between 50 and 500 Hz the line falls 20 dB (one decade at −20 dB/decade).
    expect(a.corners[0].asymptoteGainDb - a.corners[1].asymptoteGainDb).toBeCloseTo(20, 9);
  });

  it("starts at +20 dB/decade with a high-pass", () => {
    const a = asymptotes(analogModel({ ...RIAA_SPEC, highpass: { unit: "us", value: 7950 } }));
    expect(a.segments.map((s) => s.slopeDbPerDecade)).toEqual([20, 0, -20, 0, -20]);
    expect(a.corners[0].hz).toBeCloseTo(20.02, 2);
  });

  it("treats a turnover without a shelf as bass boost to DC, ended by the high-pass", () => {
    const m = analogModel({ turnover: { unit: "hz", value: 500 }, highpass: { unit: "hz", value: 20 } });
    const a = asymptotes(m);
    // (1 + sτt)/s · sτh/(1 + sτh): flat below 20 Hz, −20 dB/decade to 500 Hz, flat above.
    expect(a.segments.map((s) => s.slopeDbPerDecade)).toEqual([0, -20, 0]);
    // Bass at 20 Hz is ~ +28 dB − 3 dB re 1 kHz: 20·log10(500/20) − 3 ≈ 25 dB, less the
    // 1 kHz point's own +1 dB above the line (rule of thumb, asymptotes).
    expect(analogGainDb(m, 20)).toBeGreaterThan(23);
    expect(analogGainDb(m, 20)).toBeLessThan(26);
    expect(m.zerosRadS).not.toContain(0);
  });

  it("normalises at the reference frequency and level", () => {
    const m = analogModel({ ...RIAA_SPEC, reference: { hz: 100, db: 6 } });
    expect(analogGainDb(m, 100)).toBeCloseTo(6, 12);
    // Shape is unchanged: RIAA's 100 Hz → 1 kHz difference is 13.09 dB (from memory).
    expect(analogGainDb(m, 100) - analogGainDb(m, 1000)).toBeCloseTo(13.09, 2);
  });

  it("finds the peak gain: RIAA rises towards its 50 Hz shelf, so the peak is at the 10 Hz end", () => {
    const { peakGainDb, peakHz } = peakGain(analogModel(RIAA_SPEC));
    // RIAA at 10 Hz is +19.74 dB re 1 kHz (the 20 Hz table value 19.27 dB plus most of the last 0.5 dB; from memory).
    expect(peakHz).toBeCloseTo(10, 6);
    expect(peakGainDb).toBeCloseTo(19.74, 2);
  });

  it("finds an interior peak with a rumble high-pass", () => {
    const m = analogModel({ ...RIAA_SPEC, highpass: { unit: "us", value: 7950 } });
    const { peakGainDb, peakHz } = peakGain(m);
    // Rule of thumb: the bass boost levels off at the 50 Hz shelf while the 20 Hz
    // high-pass pulls the bottom down, so the peak lies between them.
    expect(peakHz).toBeGreaterThan(20);
    expect(peakHz).toBeLessThan(50);
    expect(peakGainDb).toBeGreaterThanOrEqual(analogGainDb(m, 20));
    expect(peakGainDb).toBeGreaterThanOrEqual(analogGainDb(m, peakHz * 1.01));
    expect(peakGainDb).toBeGreaterThanOrEqual(analogGainDb(m, peakHz / 1.01));
  });
});
