import "./zod-setup";
import { z } from "zod";
import type { SideStatusName } from "./catalogue";
import { curveSpecSchema, fitParametersSchema } from "./curves";
import { uploadEquipmentSchema } from "./equipment";
import { emptyFileMessage } from "./text";
import { readNumber } from "./zod-setup";

// Which work a side takes in which status (lib/sides/lifecycle.ts enforces them; the bench
// uses them to lock its forms). The order: assigned → flat transfer accepted → curve chosen
// → rendered → in review → approved or returned.
/** Where a flat transfer may be uploaded: from assignment until the side is sent for review; it never waits for the curve. */
export const uploadableStatuses: ReadonlySet<SideStatusName> = new Set([
  "assigned",
  "returned",
  "transferred",
  "curve_chosen",
  "rendered",
]);
/** Where a curve may be recorded or changed: from assignment (even before the transfer) until review. */
export const curveChoosableStatuses: ReadonlySet<SideStatusName> = new Set([
  "assigned",
  "returned",
  "transferred",
  "curve_chosen",
  "rendered",
]);
/** Where an access copy may be rendered: once a transfer and a curve stand, until review. */
export const renderableStatuses: ReadonlySet<SideStatusName> = new Set([
  "curve_chosen",
  "rendered",
  "returned",
]);

export const evidenceKinds = [
  "published_guidance",
  "test_disc",
  "listening",
  "disc_documentation",
  "other",
] as const;
export const evidenceLabels: Record<(typeof evidenceKinds)[number], string> = {
  published_guidance: "Published guidance for the label and era",
  test_disc: "Test-disc measurement",
  listening: "Listening comparison",
  disc_documentation: "The disc's own documentation",
  other: "Other",
};

/** A speed in rpm, typed ("78,26") or sent as a number; `what` names it in a sentence: "the speed the disc was cut at". */
const speed = (what: string) => {
  const What = what.charAt(0).toUpperCase() + what.slice(1);
  return z.preprocess(
    readNumber,
    z
      .number({ error: `Type ${what} in rpm, for example 78.` })
      .positive(`${What} must be above 0 rpm.`)
      .max(200, `${What} over 200 rpm? Check the value.`),
  );
};

/** The two speeds of a curve choice, also checked in the form as the engineer types. */
export const cutSpeedSchema = speed("the speed the disc was cut at");
export const transferSpeedSchema = speed("the speed it was transferred at");

/** The largest points file kept with a curve choice. */
export const maxMeasurementBytes = 1024 * 1024;

/**
 * The test-disc measurement a curve choice rests on: the points file as the engineer gave
 * it (the server reads the points from it and fits them itself), what the points are,
 * and which values to fit.
 */
export const testDiscMeasurementSchema = z.object({
  pointsKind: z.enum(["recording", "playback"], {
    error: "Say whether the points are the recording characteristic or the playback curve.",
  }),
  fit: fitParametersSchema,
  sourceText: z
    .string({ error: "Give the measured points." })
    .refine((t) => t.trim() !== "", "Give the measured points: one frequency (Hz) and level (dB) per line.")
    .refine(
      (t) => new TextEncoder().encode(t).length <= maxMeasurementBytes,
      "The points file is over 1 MB; a measurement of up to 5 000 points fits well below.",
    ),
  sourceFileName: z.string().trim().min(1).max(255, "The file name is too long.").optional(),
});
export type TestDiscMeasurement = z.infer<typeof testDiscMeasurementSchema>;

/** A curve choice for one or more sides: a preset version, overrides for these sides, the two speeds, and why. */
export const curveChoiceSchema = z
  .object({
    sideIds: z.array(z.uuid()).min(1, "Choose at least one side.").max(500),
    presetId: z.uuid().optional(),
    presetVersion: z.coerce.number().int().positive().optional(),
    overrides: curveSpecSchema.omit({ speedRatio: true }).partial().default({}),
    cutSpeedRpm: cutSpeedSchema,
    transferSpeedRpm: transferSpeedSchema,
    /** The render corrects the speed: resamples by cut ÷ transfer, so pitch and duration are the cut's. */
    correctSpeed: z.boolean({ error: "Say yes or no to correcting the speed." }).default(false),
    rationale: z.string().trim().min(10, "Say why this curve: at least a sentence.").max(4000),
    evidenceKind: z.enum(evidenceKinds, { error: "Say what the choice rests on." }),
    evidence: z.string().trim().max(4000).default(""),
    /** Required when the choice rests on a test disc, and only then. */
    measurement: testDiscMeasurementSchema.optional(),
  })
  .refine((v) => v.evidenceKind !== "test_disc" || v.measurement !== undefined, {
    path: ["measurement"],
    message: "A choice that rests on a test disc keeps its measurement: give the measured points.",
  })
  .refine((v) => v.evidenceKind === "test_disc" || v.measurement === undefined, {
    path: ["measurement"],
    message:
      "Measured points go with a choice that rests on a test disc: choose that evidence, or leave the points out.",
  })
  .refine((v) => (v.presetId === undefined) === (v.presetVersion === undefined), {
    path: ["presetVersion"],
    message: "Name the preset's version with the preset.",
  })
  .refine((v) => !v.correctSpeed || v.cutSpeedRpm !== v.transferSpeedRpm, {
    path: ["correctSpeed"],
    message: "The disc was transferred at the speed it was cut at: there is no speed to correct.",
  })
  .refine((v) => v.presetId !== undefined || Object.keys(v.overrides).length > 0, {
    path: ["presetId"],
    message: "Choose a preset or give the curve's values.",
  });

/** Rates an access copy may be written at besides the transfer's own ("transfer"). */
export const accessCopyRates = [44_100, 48_000, 88_200, 96_000, 176_400, 192_000] as const;

/** An access copy's rate, for a render request and for the lab's default alike. */
export const accessCopyRateSchema = z.union([
  z.literal("transfer"),
  z.coerce
    .number()
    .refine(
      (v) => (accessCopyRates as readonly number[]).includes(v),
      `Choose one of ${accessCopyRates.join(", ")} Hz, or the transfer's rate.`,
    ),
]);

/** An access copy's word length, for a render request and for the lab's default alike. */
export const accessCopyBitDepthSchema = z.coerce
  .number()
  .refine((v) => v === 16 || v === 24, "Word length must be 16 or 24 bits.");

/** Up to 10 000 parts of at most 5 GiB each (S3 limits); files up to 64 GiB here. */
export const maxTransferBytes = 64 * 1024 ** 3;

/** A file name as the engineer's computer gave it: kept as a record, never part of a storage key. */
const fileName = z
  .string()
  .trim()
  .min(1, "The file has no name.")
  .max(255, "The file's name is over 255 characters: rename it.")
  .refine((v) => !/[\u0000-\u001f\u007f]/.test(v), "The file's name holds a control character: rename it.");

export const startUploadSchema = z.object({
  sideId: z.uuid({ error: "Unknown side." }),
  fileName,
  bytes: z.coerce
    .number()
    .int()
    .positive(emptyFileMessage)
    .max(maxTransferBytes, "Files over 64 GiB are not accepted."),
});

/** An upload as the client names it: by the id the server gave it when it started, and nothing else. */
const uploadId = z.uuid({ error: "Unknown upload: use the id Rillbook gave when the upload started." });

export const uploadRefSchema = z.object({ uploadId });

export const signPartsSchema = uploadRefSchema.extend({
  partNumbers: z
    .array(
      z
        .number({ error: "Part numbers are whole numbers." })
        .int("Part numbers are whole numbers.")
        .min(1, "Parts are numbered from 1.")
        .max(10_000, "S3 allows 10 000 parts at most."),
    )
    .min(1, "Name at least one part.")
    .max(1000, "At most 1000 parts at a time."),
});

/** What the engineer says about the transfer beside the file: checked in the browser before the upload starts, and again by the server. */
export const uploadDetailsSchema = z.object({
  stylusSize: z.string().trim().max(80, "Use at most 80 characters for the stylus tip size.").default(""),
  stylusShape: z.string().trim().max(80, "Use at most 80 characters for the stylus shape.").default(""),
  measuredSpeedRpm: z.preprocess(
    readNumber,
    z
      .number({ error: "Type the measured turntable speed in rpm, for example 78.26, or leave it empty." })
      .positive("The measured turntable speed must be above 0 rpm.")
      .max(200, "The measured turntable speed over 200 rpm? Check the value.")
      .optional(),
  ),
  chain: z.string().trim().max(4000, "Use at most 4000 characters for the transfer chain.").default(""),
  /** The register's chain this transfer was made with, and the one item swapped in for it (lib/equipment). */
  ...uploadEquipmentSchema.shape,
});
export type UploadDetailsInput = z.input<typeof uploadDetailsSchema>;

export const completeUploadSchema = uploadRefSchema.extend({
  parts: z
    .array(z.object({ partNumber: z.number().int().min(1).max(10_000), etag: z.string().min(1).max(200) }))
    .min(1)
    .max(10_000),
  sha256: z.string().regex(/^[0-9a-f]{64}$/, "The SHA-256 must be 64 lower-case hex digits."),
  bytes: z.coerce.number().int().positive(),
  ...uploadDetailsSchema.shape,
  /** The engineer has seen that another side has a transfer with this SHA-256 and accepts this one anyway. */
  confirmDuplicate: z.boolean().default(false),
});
