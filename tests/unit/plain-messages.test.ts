// Numbers typed wrongly reach a person as sentences that name the field and say what it
// takes, never as zod's own words ("Invalid input: expected number, received NaN"). Bad
// values (NaN, text in a number field, negative, too large, empty, missing) go to the
// main schemas of the forms and API bodies: the curve choice, the preset, the upload's
// details, the disc; every message they give must read as a plain sentence.
import { describe, expect, it } from "vitest";
import type { z } from "zod";
import { fromZod } from "@/lib/http/errors";
import { createDiscSchema, updateDiscSchema } from "@/lib/validation/catalogue";
import { createPresetSchema, fitRequestSchema, updatePresetSchema } from "@/lib/validation/curves";
import {
  completeUploadSchema,
  curveChoiceSchema,
  startUploadSchema,
  uploadDetailsSchema,
} from "@/lib/validation/transfers";
import { fieldWords, plainMessage, readNumber } from "@/lib/validation/zod-setup";

const SIDE = "0b6e3c1e-6f1a-4c43-9a55-2f0d1f6b7a10";
const PRESET = "5d1b7f0e-2c4b-4b8e-9f4a-7f1c2d3e4b5a";
const ACCESSION = "7a9c1e22-9d0b-4f5e-8a6c-1b2d3e4f5a6b";

/** Each kind of bad number a person (or a script) might send. */
const BAD_NUMBERS: [string, unknown][] = [
  ["NaN", Number.NaN],
  ["text", "fast"],
  ["negative", -5],
  ["too large", 1e9],
  ["empty", ""],
  ["null", null],
  ["infinite", Number.POSITIVE_INFINITY],
];

/** zod's and programmers' words that must never reach a person. */
const PROGRAMMER_WORDS = [
  /\bnan\b/i,
  /expected/i,
  /received/i,
  /invalid input/i,
  /invalid option/i,
  /\(s\)/,
  /too (small|big):/i,
  /[<>]=?\s*\d/,
  /\bundefined\b/,
  /\bnull\b/,
  /\binfinity\b/i,
];

function messagesOf(schema: z.ZodType, value: unknown): Record<string, string[]> {
  const r = schema.safeParse(value);
  if (r.success) return {};
  return fromZod(r.error).fields ?? {};
}

function expectPlain(fields: Record<string, string[]>): void {
  for (const [path, messages] of Object.entries(fields))
    for (const m of messages) {
      for (const word of PROGRAMMER_WORDS) expect(m, `${path}: ${m}`).not.toMatch(word);
      // A sentence: a capital letter (or an opening quote) first, a full stop or question mark last.
      expect(m, `${path}: ${m}`).toMatch(/^[A-Z“].*[.?]$/s);
    }
}

const choice = (patch: Record<string, unknown>) => ({
  sideIds: [SIDE],
  presetId: PRESET,
  presetVersion: 1,
  overrides: {},
  cutSpeedRpm: 78,
  transferSpeedRpm: 78,
  rationale: "Published guidance for the label in these years.",
  evidenceKind: "published_guidance",
  ...patch,
});

const disc = (patch: Record<string, unknown>) => ({
  accessionId: ACCESSION,
  shelfMark: "PL-1",
  format: "shellac_78",
  nominalSpeedRpm: 78,
  groove: "coarse",
  cut: "lateral",
  sides: [{ designation: "A" }],
  ...patch,
});

describe("the curve choice, given bad numbers", () => {
  it.each(BAD_NUMBERS)("answers %s in the cut speed with a sentence naming that speed", (_, bad) => {
    const f = messagesOf(curveChoiceSchema, choice({ cutSpeedRpm: bad }));
    expect(Object.keys(f)).toEqual(["cutSpeedRpm"]);
    expect(f.cutSpeedRpm[0]).toMatch(/the speed the disc was cut at/i);
    expectPlain(f);
  });

  it("says how to type a speed that is not a number, with an example", () => {
    for (const bad of [Number.NaN, "fast", "", null])
      expect(messagesOf(curveChoiceSchema, choice({ transferSpeedRpm: bad })).transferSpeedRpm).toEqual([
        "Type the speed it was transferred at in rpm, for example 78.",
      ]);
    expect(messagesOf(curveChoiceSchema, choice({ cutSpeedRpm: -5 })).cutSpeedRpm).toEqual([
      "The speed the disc was cut at must be above 0 rpm.",
    ]);
  });

  it("reads a speed typed with a decimal comma or spaces", () => {
    const r = curveChoiceSchema.parse(choice({ cutSpeedRpm: " 78,26 ", transferSpeedRpm: "80" }));
    expect([r.cutSpeedRpm, r.transferSpeedRpm]).toEqual([78.26, 80]);
  });

  it.each(BAD_NUMBERS)("answers %s in a corner's value in the corner's own unit", (_, bad) => {
    const f = messagesOf(
      curveChoiceSchema,
      choice({ overrides: { turnover: { unit: "hz", value: bad }, rolloff: { unit: "us", value: bad } } }),
    );
    // A negative or huge corner is lib/curves' to judge (with the curve's own words); anything not a number is refused here.
    if (typeof bad === "number" && Number.isFinite(bad)) return expect(f).toEqual({});
    expect(f["overrides.turnover.value"]).toEqual(["Type the bass turnover in hertz, for example 500."]);
    expect(f["overrides.rolloff.value"]).toEqual([
      "Type the treble rolloff in microseconds, for example 75.",
    ]);
    expectPlain(f);
  });

  it("names a wrong unit, a wrong reference and a wrong preset version plainly", () => {
    const f = messagesOf(
      curveChoiceSchema,
      choice({
        presetVersion: "two",
        overrides: { shelf: { unit: "kHz", value: 3 }, reference: { hz: "loud", db: Number.NaN } },
      }),
    );
    expect(f.presetVersion).toEqual(["Type the preset's version as a whole number, for example 3."]);
    expect(f["overrides.shelf.unit"]?.[0]).toMatch(/^Give the low-frequency shelf in Hz, µs or dB at 10 kHz/);
    expect(f["overrides.reference.hz"]).toEqual(["Type the reference frequency in hertz, for example 1000."]);
    expect(f["overrides.reference.db"]).toEqual(["Type the reference gain in decibels, for example 0."]);
    expectPlain(f);
  });

  it("answers an empty body with a sentence for every field it needs", () => {
    const f = messagesOf(curveChoiceSchema, {});
    expect(Object.keys(f).sort()).toEqual(
      ["cutSpeedRpm", "evidenceKind", "rationale", "sideIds", "transferSpeedRpm"].sort(),
    );
    expectPlain(f);
  });
});

describe("the preset, given bad numbers", () => {
  it.each(BAD_NUMBERS)("answers %s in a corner, the speed ratio and the reference plainly", (_, bad) => {
    const body = {
      name: "Test preset",
      changeNote: "First version.",
      spec: {
        turnover: { unit: "us", value: bad },
        rolloff: { unit: "db10k", value: bad },
        speedRatio: bad,
        reference: { hz: bad, db: bad },
      },
    };
    const f = messagesOf(createPresetSchema, body);
    const g = messagesOf(updatePresetSchema, body);
    if (typeof bad === "number" && Number.isFinite(bad)) {
      expect(f).toEqual({});
      return;
    }
    expect(f["spec.turnover.value"]).toEqual(["Type the bass turnover in microseconds, for example 318."]);
    expect(f["spec.rolloff.value"]).toEqual([
      "Type the treble rolloff as its attenuation at 10 kHz in dB, for example 13.7.",
    ]);
    // A speed ratio may be left out (null): the curve is then played at the speed it was cut.
    expect(f["spec.speedRatio"]).toEqual(
      bad === null ? undefined : ["Type the speed ratio as transfer speed ÷ cut speed, for example 1.0."],
    );
    expect(g).toEqual(f);
    expectPlain(f);
  });

  it("answers an empty name and note, and a fit's bad points, with sentences", () => {
    expectPlain(messagesOf(createPresetSchema, { name: "", changeNote: "", spec: null, notes: 5 }));
    const f = messagesOf(fitRequestSchema, {
      points: [{ hz: -5, db: "loud" }],
      fit: [],
      levelOffsetDb: Number.NaN,
    });
    expect(f["points.0.hz"]).toEqual(["The frequency of point 1 must be above 0 Hz."]);
    expect(f["points.0.db"]).toEqual(["Type the level of point 1 in decibels, for example 0."]);
    expect(f.levelOffsetDb).toEqual(["Type the level offset in decibels, for example 0."]);
    expectPlain(f);
  });
});

describe("the upload's details, given bad numbers", () => {
  it.each(BAD_NUMBERS)("answers %s in the measured speed", (label, bad) => {
    const f = messagesOf(uploadDetailsSchema, { measuredSpeedRpm: bad });
    // Empty and null mean "not measured": the speed is optional.
    if (label === "empty" || label === "null") return expect(f).toEqual({});
    expect(Object.keys(f)).toEqual(["measuredSpeedRpm"]);
    expect(f.measuredSpeedRpm[0]).toMatch(/^(Type )?the measured turntable speed/i);
    expectPlain(f);
  });

  it("reads the measured speed typed with a decimal comma, and refuses it as text", () => {
    expect(uploadDetailsSchema.parse({ measuredSpeedRpm: "78,26" }).measuredSpeedRpm).toBe(78.26);
    expect(messagesOf(uploadDetailsSchema, { measuredSpeedRpm: "78 rpm" }).measuredSpeedRpm).toEqual([
      "Type the measured turntable speed in rpm, for example 78.26, or leave it empty.",
    ]);
  });

  it("answers bad sizes, part numbers and speeds of a finished upload with sentences", () => {
    const f = messagesOf(completeUploadSchema, {
      uploadId: SIDE,
      parts: [{ partNumber: Number.NaN, etag: "" }],
      sha256: "0".repeat(64),
      bytes: "big",
      measuredSpeedRpm: 1e9,
      stylusSize: "x".repeat(81),
    });
    expect(f.bytes).toEqual(["Type the file's size as a whole number of bytes, for example 52428800."]);
    expect(f["parts.0.partNumber"]?.[0]).toMatch(/part number of part 1/);
    expect(f["parts.0.etag"]).toEqual(["Fill in the ETag of part 1."]);
    expect(f.measuredSpeedRpm).toEqual(["The measured turntable speed over 200 rpm? Check the value."]);
    expect(f.stylusSize).toEqual(["Use at most 80 characters for the stylus tip size."]);
    expectPlain(f);
    for (const [, bad] of BAD_NUMBERS)
      expectPlain(messagesOf(startUploadSchema, { sideId: "side", fileName: "", bytes: bad }));
  });
});

describe("the disc, given bad numbers", () => {
  it.each(BAD_NUMBERS)("answers %s in the speed, diameter, years and version", (_, bad) => {
    const fields = { nominalSpeedRpm: bad, diameterIn: bad, recordedFromYear: bad, recordedToYear: bad };
    const f = messagesOf(createDiscSchema, disc(fields));
    const g = messagesOf(updateDiscSchema, disc({ ...fields, version: bad }));
    expect(f.nominalSpeedRpm?.[0]).toMatch(/speed/i);
    expectPlain(f);
    expectPlain(g);
  });

  it("tells an empty nominal speed how to type it", () => {
    expect(messagesOf(createDiscSchema, disc({ nominalSpeedRpm: "" })).nominalSpeedRpm).toEqual([
      "Nominal speed must be a number (rpm), for example 78.",
    ]);
    expect(messagesOf(updateDiscSchema, disc({ version: "abc" })).version).toEqual([
      "Type the version as a whole number, for example 2.",
    ]);
  });

  it("answers a side's bad fields naming the side", () => {
    const f = messagesOf(
      createDiscSchema,
      disc({ sides: [{ designation: "A" }, { designation: "B", title: 5 }] }),
    );
    expect(f["sides.1.title"]).toEqual(["Type the title of side 2 as text."]);
    expectPlain(messagesOf(createDiscSchema, { format: 1, groove: null, cut: "diagonal", sides: "A" }));
  });
});

describe("the error map itself", () => {
  it("names fields from their path, inside lists and references too", () => {
    expect(fieldWords(["cutSpeedRpm"]).name).toBe("the speed the disc was cut at");
    expect(fieldWords(["sides", 2, "matrixNumber"]).name).toBe("the matrix number of side 3");
    expect(fieldWords(["overrides", "reference", "hz"]).name).toBe("the reference frequency");
    expect(fieldWords(["sideIds", 0]).name).toBe("side 1");
    expect(fieldWords(["someNewField"]).name).toBe("the some new field");
  });

  it("words every kind of zod issue as a sentence", () => {
    const issues = [
      { code: "invalid_type", expected: "number", input: Number.NaN, path: ["speed"] },
      { code: "invalid_type", expected: "int", input: 2.5, path: ["page"] },
      { code: "invalid_type", expected: "string", input: undefined, path: ["title"] },
      { code: "invalid_type", expected: "boolean", input: "yes", path: ["confirmDuplicate"] },
      { code: "invalid_type", expected: "object", input: 5, path: [] },
      { code: "too_small", origin: "number", minimum: 0, inclusive: false, input: -1, path: ["bytes"] },
      { code: "too_small", origin: "string", minimum: 3, inclusive: true, input: "", path: ["name"] },
      { code: "too_small", origin: "array", minimum: 2, inclusive: true, input: [], path: ["points"] },
      {
        code: "too_big",
        origin: "number",
        maximum: 384000,
        inclusive: true,
        input: 1e9,
        path: ["sampleRateHz"],
      },
      { code: "too_big", origin: "array", maximum: 1, inclusive: true, input: [], path: ["fit"] },
      { code: "invalid_format", format: "uuid", input: "x", path: ["sideId"] },
      { code: "invalid_format", format: "email", input: "x", path: ["email"] },
      { code: "invalid_format", format: "regex", input: "x", path: ["sha256"] },
      { code: "invalid_value", values: ["a", "b", "c"], input: "d", path: ["sort"] },
      { code: "not_multiple_of", divisor: 2, input: 3, path: ["page"] },
      { code: "unrecognized_keys", keys: ["colour", "size"], input: {}, path: [] },
      { code: "invalid_union", errors: [], input: 1, path: ["rate"] },
      { code: "custom", input: 1, path: ["overrides"] },
    ] as unknown as z.core.$ZodRawIssue[];
    const messages = issues.map((i) => plainMessage(i));
    expectPlain({ _: messages });
    expect(messages[0]).toBe("Type the speed in rpm, for example 78.");
    expect(messages[5]).toBe("The file's size must be above 0 bytes.");
    expect(messages[8]).toBe("The sample rate must be at most 384 000 Hz.");
    expect(messages[13]).toBe("Choose the sort order: a, b or c.");
    expect(messages[15]).toBe("Rillbook takes no fields called “colour” and “size”: leave them out.");
  });

  it("reads typed numbers: a decimal comma, spaces, and blanks as not given", () => {
    expect(readNumber(" 78,26 ")).toBe(78.26);
    expect(readNumber("1e3")).toBe(1000);
    expect(readNumber("")).toBeUndefined();
    expect(readNumber(null)).toBeUndefined();
    expect(readNumber("78 rpm")).toBeNaN();
    expect(readNumber("1,000.5")).toBeNaN();
    expect(readNumber(45)).toBe(45);
  });
});
