import { z } from "zod";
import { normalizeRolloffDb } from "../curves/names";
import { cleanString } from "./text";

const finite = (what: string) =>
  z
    .number({ error: `${what} must be a number.` })
    .refine(Number.isFinite, `${what} must be a finite number.`);

/** A corner as sent. A rolloff in dB at 10 kHz is kept as attenuation (≥ 0): −10 and 10 are both 10 dB of cut (lib/curves/names.ts). */
export const cornerInputSchema = z
  .object({
    unit: z.enum(["hz", "us", "db10k"], { error: "Unit must be hz, us or db10k." }),
    value: finite("The value"),
  })
  .transform((c) => (c.unit === "db10k" ? { ...c, value: normalizeRolloffDb(c.value) } : c));

/** The JSON shape of a lib/curves CurveSpec; lib/curves then checks the maths (order of corners, bounded bass). */
export const curveSpecSchema = z.object({
  turnover: cornerInputSchema.nullish(),
  shelf: cornerInputSchema.nullish(),
  rolloff: cornerInputSchema.nullish(),
  highpass: cornerInputSchema.nullish(),
  ultrasonic: cornerInputSchema.nullish(),
  reference: z.object({ hz: finite("Reference frequency"), db: finite("Reference gain") }).nullish(),
  speedRatio: finite("Speed ratio").nullish(),
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
  frequenciesHz: z
    .array(finite("Each frequency").positive("Frequencies must be above 0 Hz."))
    .max(10_000)
    .optional(),
  renderFilter: z.boolean().default(false),
});

export const fitRequestSchema = z.object({
  points: z
    .array(z.object({ hz: finite("hz").positive("hz must be above 0."), db: finite("db") }))
    .min(1, "Give at least one point.")
    .max(5000),
  fit: z
    .array(z.enum(["turnover", "shelf", "rolloff", "highpass", "ultrasonic", "levelOffset"]))
    .min(1, "Choose at least one parameter to fit."),
  kind: z.enum(["playback", "recording"]).default("playback"),
  initial: curveSpecSchema.default({}),
  levelOffsetDb: finite("Level offset").default(0),
});
