import { describe, expect, it } from "vitest";
import { parseCodingHistory } from "@/lib/audio";
import { captureCodingHistory, inChainOrder, itemText, tipText } from "@/lib/equipment/describe";
import { equipmentItemSchema, findingSchema, tipMicrometres } from "@/lib/validation/equipment";

const item = (kind: string, make: string, model: string, serial = "", extra: object = {}) =>
  ({ kind, make, model, serial, stylusTipUm: null, stylusShape: null, ...extra }) as Parameters<
    typeof itemText
  >[0];

describe("a stylus's tip", () => {
  it("is kept in µm whichever unit it is typed in (1 mil = 25.4 µm) and shown in both", () => {
    expect(tipMicrometres({ value: 3, unit: "mil" })).toBe(76.2);
    expect(tipMicrometres({ value: 0.7, unit: "mil" })).toBe(17.78);
    expect(tipMicrometres({ value: 63.5, unit: "um" })).toBe(63.5);
    expect(tipText(76.2)).toBe("3.0 mil (76.2 µm)");
    expect(tipText("63.500")).toBe("2.5 mil (63.5 µm)");
    expect(tipText(17.78)).toBe("0.7 mil (17.8 µm)");
    expect(tipText(null)).toBe("");
  });

  it("belongs to a stylus only, and a service ends after it begins", () => {
    const r = equipmentItemSchema.safeParse({
      kind: "cartridge",
      make: "Vellum Audio",
      stylusTip: { value: 3, unit: "mil" },
      stylusShape: "conical",
      inServiceOn: "2026-05-01",
      outOfServiceOn: "2026-04-30",
    });
    expect(r.success).toBe(false);
    const paths = r.error!.issues.map((i) => i.path.join("."));
    expect(paths).toEqual(expect.arrayContaining(["stylusTip", "stylusShape", "outOfServiceOn"]));
    expect(
      equipmentItemSchema.safeParse({ kind: "stylus", make: "V", stylusTip: { value: "3,0", unit: "mil" } })
        .success,
    ).toBe(true);
    expect(
      equipmentItemSchema.safeParse({ kind: "stylus", make: "V", inServiceOn: "2026-02-30" }).success,
    ).toBe(false);
  });
});

describe("a day in the register", () => {
  it("must be a day of the calendar: 29 February only in a leap year, with a sentence naming the field", () => {
    const day = (foundOn: string) =>
      findingSchema.safeParse({ foundOn, outcome: "good", description: "Sound." });
    expect(day("2024-02-29").success).toBe(true);
    expect(day(" 2026-11-30 ").success).toBe(true);
    for (const bad of ["2025-02-29", "2026-04-31", "2026-13-01", "30/11/2026"]) {
      const r = day(bad);
      expect(r.success, bad).toBe(false);
      expect(r.error!.issues[0].message, bad).toMatch(
        /^Type the day it was found as a day of the calendar, YYYY-MM-DD/,
      );
    }
  });
});

describe("the capture's coding history lines (EBU R98)", () => {
  const chain = [
    item("converter", "Larkspur", "AD-24", "LX-40"),
    item("stylus", "Vellum Audio", "S-30", "ST-301", {
      stylusTipUm: 76.2,
      stylusShape: "truncated elliptical",
    }),
    item("turntable", "Harrowgate", "TT-9", "HG-1182"),
    item("cartridge", "Vellum Audio", "MC-3", "C-5521"),
    item("preamplifier", "Fenwick", "FP-1", ""),
  ];

  it("reads a chain from the disc to the file", () => {
    expect(inChainOrder(chain).map((i) => i.kind)).toEqual([
      "turntable",
      "cartridge",
      "stylus",
      "preamplifier",
      "converter",
    ]);
  });

  it("gives an analogue-source line (cartridge, stylus, turntable, measured speed) and the converter's A/D line", () => {
    const history = captureCodingHistory(chain, {
      sampleRateHz: 96_000,
      bitsPerSample: 24,
      channels: 2,
      encoding: "pcm",
      measuredSpeedRpm: "78.26",
    });
    expect(history).toBe(
      "A=ANALOGUE,M=stereo,T=cartridge Vellum Audio MC-3 SN C-5521; stylus Vellum Audio S-30 SN ST-301 " +
        "3.0 mil (76.2 um) truncated elliptical; turntable Harrowgate TT-9 SN HG-1182; measured speed 78.26 rpm; " +
        "preamplifier Fenwick FP-1; flat (no playback equalization)\r\n" +
        "A=PCM,F=96000,W=24,M=stereo,T=Larkspur AD-24 SN LX-40 A/D; flat transfer\r\n",
    );
    const lines = parseCodingHistory(history);
    expect(lines.map((l) => l.algorithm)).toEqual(["ANALOGUE", "PCM"]);
  });

  it("keeps commas typed in a name out of R98's parameter list", () => {
    const history = captureCodingHistory([item("cartridge", "Vellum, Audio", "MC-3")], {
      sampleRateHz: 44_100,
      bitsPerSample: 24,
      channels: 1,
      encoding: "pcm",
      measuredSpeedRpm: null,
    });
    const [analogue] = parseCodingHistory(history);
    expect(analogue.mode).toBe("mono");
    expect(analogue.text).toBe("cartridge Vellum; Audio MC-3; flat (no playback equalization)");
  });
});
