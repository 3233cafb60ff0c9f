import { describe, expect, it } from "vitest";
import {
  curveChoiceName,
  db10kToUs,
  formatCorner,
  formatRolloffDb,
  parseRolloffDb,
  resolveCurve,
} from "@/lib/curves";
import { curveSpecSchema } from "@/lib/validation/curves";

describe("treble rolloff typed either way", () => {
  it.each([
    ["10", 10],
    ["\u221210", 10], // U+2212 MINUS SIGN, as the product prints it
    ["-10", 10],
    ["+10", 10],
    ["0", 0],
    ["10 dB", 10],
    ["−13.7 dB at 10 kHz", 13.7],
    [" 13,7 ", 13.7],
    ["10 dB attenuation at 10 kHz", 10],
  ])("reads %j as %s dB of attenuation", (text, db) => {
    expect(parseRolloffDb(text)).toBe(db);
  });

  it.each([[""], ["ten"], ["10 Hz"], ["--10"], ["1e"], ["10 dB at 5 kHz"]])(
    "gives NaN for %j, which the curve refuses beside the field",
    (text) => {
      expect(parseRolloffDb(text)).toBeNaN();
    },
  );

  it("is shown one way, as a positive attenuation, whichever sign was stored", () => {
    expect(formatRolloffDb(10)).toBe("10 dB attenuation at 10 kHz");
    expect(formatRolloffDb(-10)).toBe("10 dB attenuation at 10 kHz");
    expect(formatCorner({ unit: "db10k", value: -13.7 })).toBe("13.7 dB attenuation at 10 kHz");
  });

  it("−10 and 10 make the same curve, and the API keeps it as attenuation", () => {
    const minus = resolveCurve({ rolloff: { unit: "db10k", value: -10 } });
    const plus = resolveCurve({ rolloff: { unit: "db10k", value: 10 } });
    expect(minus.rolloff!.tauUs).toBe(plus.rolloff!.tauUs);
    expect(minus.rolloff!.db10k).toBeCloseTo(10, 9);
    expect(curveSpecSchema.parse({ rolloff: { unit: "db10k", value: -10 } }).rolloff).toEqual({
      unit: "db10k",
      value: 10,
    });
    expect(curveSpecSchema.parse({ turnover: { unit: "hz", value: 500 } }).turnover).toEqual({
      unit: "hz",
      value: 500,
    });
  });

  it("10 dB at 10 kHz is a 47.7 µs time constant", () => {
    // DESIGN.md, "The curve model": τr = sqrt(10^(R/10) − 1) / (2π·10 000). For R = 10 dB,
    // sqrt(10 − 1) = 3, so τr = 3 / (2π·10 000) s = 47.746 µs.
    expect(db10kToUs(10)).toBeCloseTo(3e6 / (2 * Math.PI * 10_000), 9);
    expect(db10kToUs(10)).toBeCloseTo(47.75, 2);
    expect(resolveCurve({ rolloff: { unit: "db10k", value: -10 } }).rolloff!.tauUs).toBeCloseTo(47.75, 2);
  });
});

describe("a recorded curve choice by name", () => {
  it("names the preset version and what was changed for the side", () => {
    expect(
      curveChoiceName({
        presetName: "Turnover 500 Hz · no rolloff · shelf 50 Hz",
        presetVersion: 1,
        overrides: { rolloff: { unit: "db10k", value: 10 } },
        cutSpeedRpm: 78,
        transferSpeedRpm: 78,
      }),
    ).toBe("Turnover 500 Hz · no rolloff · shelf 50 Hz v1 + rolloff 10 dB attenuation at 10 kHz");
  });

  it("names a preset used as it is without a '+'", () => {
    expect(
      curveChoiceName({
        presetName: "RIAA",
        presetVersion: 3,
        overrides: {},
        cutSpeedRpm: 33.33,
        transferSpeedRpm: 33.33,
      }),
    ).toBe("RIAA v3");
  });

  it("names corners taken out, a new level reference, and values in the unit they were given", () => {
    expect(
      curveChoiceName({
        presetName: "RIAA",
        presetVersion: 2,
        overrides: {
          turnover: { unit: "us", value: 450 },
          shelf: null,
          highpass: { unit: "hz", value: 20 },
          reference: { hz: 1000, db: -2 },
        },
      }),
    ).toBe("RIAA v2 + turnover 450 µs, no shelf, high-pass 20 Hz, level \u22122 dB at 1000 Hz");
  });

  it("names the speed ratio only when the transfer speed differs from the cut speed", () => {
    expect(
      curveChoiceName({
        presetName: "RIAA",
        presetVersion: 1,
        overrides: {},
        cutSpeedRpm: 78,
        transferSpeedRpm: 80,
      }),
    ).toBe("RIAA v1 · cut 78 rpm, transferred 80 rpm (×1.026)");
    expect(
      curveChoiceName({
        presetName: "RIAA",
        presetVersion: 1,
        overrides: {},
        cutSpeedRpm: 78,
        transferSpeedRpm: 78,
      }),
    ).not.toMatch(/rpm/);
  });

  it("names a choice without a preset by its own values", () => {
    expect(
      curveChoiceName({
        overrides: {
          turnover: { unit: "hz", value: 500 },
          shelf: { unit: "hz", value: 50 },
          rolloff: { unit: "db10k", value: -16 },
        },
      }),
    ).toBe("Own values: turnover 500 Hz, shelf 50 Hz, rolloff 16 dB attenuation at 10 kHz");
    expect(curveChoiceName({ overrides: {} })).toBe("Own values");
  });
});
