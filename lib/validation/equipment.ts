import "./zod-setup";
import { z } from "zod";
import { cleanString } from "./text";
import { readNumber } from "./zod-setup";

// The equipment register's inputs: items, chains, calibrations, findings and the recall's
// filters. Shared by the register's pages (checked as the engineer types) and its routes.

export const equipmentKinds = [
  "turntable",
  "tonearm",
  "cartridge",
  "stylus",
  "preamplifier",
  "converter",
  "other",
] as const;
export type EquipmentKindName = (typeof equipmentKinds)[number];

export const equipmentKindLabels: Record<EquipmentKindName, string> = {
  turntable: "Turntable",
  tonearm: "Tonearm",
  cartridge: "Cartridge",
  stylus: "Stylus",
  preamplifier: "Preamplifier",
  converter: "Converter",
  other: "Other",
};

/** The order a chain is read in: from the disc to the file. */
export const chainOrder: readonly EquipmentKindName[] = [
  "turntable",
  "tonearm",
  "cartridge",
  "stylus",
  "preamplifier",
  "converter",
  "other",
];

/** The name a calibration records for the curve a test disc was cut with when no preset is named. */
export const RIAA_CALIBRATION_NAME = "RIAA (IEC 60098)";

/** 1 mil = 0.001 inch = 25.4 µm (the inch is exactly 25.4 mm). */
export const MICROMETRES_PER_MIL = 25.4;

const blankToUndefined = (v: unknown) => (typeof v === "string" && v.trim() === "" ? undefined : v);

/** A calendar date typed as YYYY-MM-DD that exists (not 2026-02-30): zod's ISO date, which knows the calendar. */
function calendarDate(what: string) {
  return z
    .string({ error: `Type ${what} as YYYY-MM-DD.` })
    .trim()
    .pipe(
      z.iso.date({ error: `Type ${what} as a day of the calendar, YYYY-MM-DD, for example 2026-11-30.` }),
    );
}
const optionalDate = (what: string) => z.preprocess(blankToUndefined, calendarDate(what).nullish());

const text = (what: string, max: number) =>
  cleanString()
    .transform((s) => s.trim())
    .pipe(z.string().max(max, `Use at most ${max} characters for ${what}.`));

export const stylusTipUnits = ["mil", "um"] as const;

/** A stylus's tip as typed: a size in mil or µm (stored in µm, shown in both). */
export const stylusTipSchema = z.object({
  value: z.preprocess(
    readNumber,
    z
      .number({ error: "Type the tip size as a number, for example 3.0 (mil) or 76 (µm)." })
      .positive("The tip size must be above 0.")
      .max(499, "A tip over 499 µm? Check the value and its unit."),
  ),
  unit: z.enum(stylusTipUnits, { error: "Say whether the tip size is in mil or µm." }),
});

/** The tip in µm, rounded to the thousandth the register keeps. */
export function tipMicrometres(tip: { value: number; unit: "mil" | "um" }): number {
  const um = tip.unit === "mil" ? tip.value * MICROMETRES_PER_MIL : tip.value;
  return Math.round(um * 1000) / 1000;
}

const itemFields = {
  make: text("the make", 200).pipe(z.string().min(1, "Type the make, as the lab writes it.")),
  model: text("the model", 200).default(""),
  serial: text("the serial number", 120).default(""),
  inServiceOn: optionalDate("the date it came into service"),
  outOfServiceOn: optionalDate("the date it went out of service"),
  stylusTip: stylusTipSchema.nullish(),
  stylusShape: z.preprocess(blankToUndefined, text("the stylus shape", 80).nullish()),
  notes: text("the notes", 4000).default(""),
};

type ItemShape = {
  kind: EquipmentKindName;
  inServiceOn?: string | null;
  outOfServiceOn?: string | null;
  stylusTip?: unknown;
  stylusShape?: string | null;
};

function checkItem(v: ItemShape, ctx: z.RefinementCtx) {
  if (v.inServiceOn && v.outOfServiceOn && v.outOfServiceOn < v.inServiceOn)
    ctx.addIssue({
      code: "custom",
      path: ["outOfServiceOn"],
      message: "It cannot go out of service before it came into service.",
    });
  if (v.kind !== "stylus") {
    if (v.stylusTip)
      ctx.addIssue({ code: "custom", path: ["stylusTip"], message: "Only a stylus has a tip size." });
    if (v.stylusShape)
      ctx.addIssue({ code: "custom", path: ["stylusShape"], message: "Only a stylus has a tip shape." });
  }
}

export const equipmentItemSchema = z
  .object({ kind: z.enum(equipmentKinds, { error: "Choose what kind of item it is." }), ...itemFields })
  .superRefine(checkItem);
export type EquipmentItemInput = z.input<typeof equipmentItemSchema>;

/** An edit: every field but the kind (chains and transfers name an item with its kind), and the version it was read at. */
export const equipmentItemEditSchema = z
  .object({ ...itemFields, version: z.coerce.number().int().positive() })
  .extend({ kind: z.enum(equipmentKinds).optional() });

const itemIds = z
  .array(z.uuid({ error: "Unknown item." }))
  .max(20, "A chain of more than 20 items? Split it.")
  .refine((ids) => new Set(ids).size === ids.length, "An item is named twice.");

export const equipmentChainSchema = z.object({
  name: text("the chain's name", 120).pipe(z.string().min(1, "Name the chain.")),
  notes: text("the notes", 4000).default(""),
  itemIds: itemIds.min(1, "Choose at least one item."),
});

export const equipmentChainEditSchema = z.object({
  name: text("the chain's name", 120).pipe(z.string().min(1, "Name the chain.")).optional(),
  notes: text("the notes", 4000).optional(),
  itemIds: itemIds.min(1, "Choose at least one item.").optional(),
  retired: z.boolean().optional(),
  version: z.coerce.number().int().positive(),
});

export const calibrationFitParameters = ["turnover", "shelf", "rolloff", "levelOffset"] as const;

export const calibrationSchema = z
  .object({
    calibratedOn: calendarDate("the date of the calibration"),
    testDisc: text("the test disc", 200).pipe(z.string().min(1, "Name the test disc as the lab names it.")),
    /** The curve the test disc was cut with: a preset version of the library; without one, RIAA (IEC 60098), a standard test disc's curve. */
    presetId: z.uuid().optional(),
    presetVersion: z.coerce.number().int().positive().optional(),
    points: z
      .array(z.object({ hz: z.number().positive().max(100_000), db: z.number().min(-200).max(200) }))
      .min(3, "Give at least three measured points.")
      .max(2000),
    /** What the points are: the flat chain's output gives the disc's recording characteristic. */
    pointsKind: z.enum(["recording", "playback"]).default("recording"),
    fit: z
      .array(z.enum(calibrationFitParameters))
      .min(1, "Choose at least one parameter to fit.")
      .default(["turnover", "rolloff", "levelOffset"]),
    notes: text("the notes", 4000).default(""),
  })
  .refine((v) => (v.presetId === undefined) === (v.presetVersion === undefined), {
    path: ["presetVersion"],
    message: "Name the preset's version with the preset.",
  });

export const findingSchema = z.object({
  foundOn: calendarDate("the day it was found"),
  outcome: z.enum(["fault", "good"], {
    error: "Say whether something was wrong, or the item was found sound.",
  }),
  description: text("what was found", 4000).pipe(z.string().min(1, "Say what was found.")),
});

/** The recall's filters: the dates (inclusive) and whether to keep only transfers a side still stands on. */
export const recallQuerySchema = z.object({
  from: optionalDate("the first day"),
  to: optionalDate("the last day"),
  currentOnly: z
    .enum(["1", "0", "true", "false"])
    .optional()
    .transform((v) => v === "1" || v === "true"),
  format: z.enum(["json", "csv"]).default("json"),
});

/** The register's chain picked for an upload, and the one item swapped in for this transfer. */
export const uploadEquipmentSchema = z.object({
  chainId: z.preprocess(blankToUndefined, z.uuid({ error: "Unknown chain." }).optional()),
  swapItemId: z.preprocess(blankToUndefined, z.uuid({ error: "Unknown item." }).optional()),
});
