import "./zod-setup";
import { z } from "zod";
import { normalizeRolloffDb } from "../curves/names";
import { cleanString } from "./text";

// Numbers here take zod's own z.number(), which refuses NaN and ±Infinity; a failed one is
// told in a sentence that names the field (the error map in ./zod-setup). A corner's value
// is told here, in the unit it came in.

type CornerKey = "turnover" | "shelf" | "rolloff" | "highpass" | "ultrasonic";

/** What a person might type for each corner in each unit. */
const CORNER_EXAMPLES: Record<CornerKey, { hz: string; us: string; db10k?: string }> = {
  turnover: { hz: "500", us: "318" },
  shelf: { hz: "50", us: "3180" },
  rolloff: { hz: "2122", us: "75", db10k: "13.7" },
  highpass: { hz: "20", us: "7958" },
  ultrasonic: { hz: "50000", us: "3.18" },
};
const CORNER_NAMES: Record<CornerKey, string> = {
  turnover: "the bass turnover",
  shelf: "the low-frequency shelf",
  rolloff: "the treble rolloff",
  highpass: "the rumble high-pass",
  ultrasonic: "the ultrasonic zero",
};

/** A corner as sent. A rolloff in dB at 10 kHz is kept as attenuation (≥ 0): −10 and 10 are both 10 dB of cut (lib/curves/names.ts). */
function cornerInput(corner: CornerKey) {
  const name = CORNER_NAMES[corner];
  const ex = CORNER_EXAMPLES[corner];
  return z
    .discriminatedUnion(
      "unit",
      [
        z.object({
          unit: z.literal("hz"),
          value: z.number({ error: `Type ${name} in hertz, for example ${ex.hz}.` }),
        }),
        z.object({
          unit: z.literal("us"),
          value: z.number({ error: `Type ${name} in microseconds, for example ${ex.us}.` }),
        }),
        z.object({
          unit: z.literal("db10k"),
          value: z.number({
            error: `Type ${name} as its attenuation at 10 kHz in dB, for example ${ex.db10k ?? "13.7"}.`,
          }),
        }),
      ],
      { error: `Give ${name} in Hz, µs or dB at 10 kHz (unit hz, us or db10k).` },
    )
    .transform((c) => (c.unit === "db10k" ? { ...c, value: normalizeRolloffDb(c.value) } : c));
}

/** The JSON shape of a lib/curves CurveSpec; lib/curves then checks the maths (order of corners, bounded bass). */
export const curveSpecSchema = z.object({
  turnover: cornerInput("turnover").nullish(),
  shelf: cornerInput("shelf").nullish(),
  rolloff: cornerInput("rolloff").nullish(),
  highpass: cornerInput("highpass").nullish(),
  ultrasonic: cornerInput("ultrasonic").nullish(),
  reference: z.object({ hz: z.number(), db: z.number() }).nullish(),
  speedRatio: z.number().nullish(),
});

export const presetNameSchema = cleanString()
  .trim()
  .min(1, "Give the preset a name.")
  .max(120, "Use at most 120 characters for the name.");
export const changeNoteSchema = cleanString()
  .trim()
  .min(3, "Say why (a short note is required for every version).")
  .max(2000);

export const createPresetSchema = z.object({
  name: presetNameSchema,
  spec: curveSpecSchema,
  notes: cleanString().max(8000).default(""),
  changeNote: changeNoteSchema,
});

export const updatePresetSchema = z.object({
  name: presetNameSchema.optional(),
  spec: curveSpecSchema.optional(),
  notes: cleanString().max(8000).optional(),
  changeNote: changeNoteSchema,
});

export const sampleRateSchema = z.coerce
  .number()
  .int("The sample rate must be a whole number of Hz.")
  .min(44_100, "The sample rate must be at least 44 100 Hz (20 kHz needs it).")
  .max(384_000, "The sample rate must be at most 384 000 Hz.");

export const responseRequestSchema = z.object({
  spec: curveSpecSchema,
  sampleRateHz: sampleRateSchema.default(96_000),
  frequenciesHz: z.array(z.number().positive()).max(10_000).optional(),
  renderFilter: z.boolean().default(false),
});

/** The values a fit may settle (lib/curves/fit.ts's FitParameter). */
export const fitParametersSchema = z
  .array(z.enum(["turnover", "shelf", "rolloff", "highpass", "ultrasonic", "levelOffset"]))
  .min(1, "Choose at least one parameter to fit.");

export const fitRequestSchema = z.object({
  points: z
    .array(z.object({ hz: z.number().positive(), db: z.number() }))
    .min(1, "Give at least one point.")
    .max(5000),
  fit: fitParametersSchema,
  kind: z.enum(["playback", "recording"]).default("playback"),
  initial: curveSpecSchema.default({}),
  levelOffsetDb: z.number().default(0),
});
