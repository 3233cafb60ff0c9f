import { z } from "zod";
import { cleanString } from "./text";

export const discFormats = [
  "shellac_78",
  "instantaneous_lacquer",
  "transcription",
  "vinyl_78",
  "microgroove_lp",
  "other",
] as const;
export const formatLabels: Record<(typeof discFormats)[number], string> = {
  shellac_78: "Shellac 78",
  instantaneous_lacquer: "Instantaneous lacquer",
  transcription: "Transcription disc",
  vinyl_78: "Vinyl 78",
  microgroove_lp: "Microgroove LP",
  other: "Other",
};
export const discBases = ["aluminium", "glass", "card", "unknown"] as const;
export const conditionGrades = ["unassessed", "excellent", "good", "fair", "poor", "unplayable"] as const;
export const conditionFlags = [
  "cracks",
  "warp",
  "delamination",
  "residue",
  "mould",
  "wear",
  "chips",
  "scratches",
] as const;
/** In the archive's order: assigned → flat transfer accepted → curve chosen → rendered → in review → approved or returned. */
export const sideStatuses = [
  "catalogued",
  "assigned",
  "transferred",
  "curve_chosen",
  "rendered",
  "in_review",
  "approved",
  "returned",
] as const;
export type SideStatusName = (typeof sideStatuses)[number];
export const statusLabels: Record<SideStatusName, string> = {
  catalogued: "Catalogued",
  assigned: "Assigned",
  transferred: "Flat transfer in",
  curve_chosen: "Curve chosen",
  rendered: "Rendered",
  in_review: "In review",
  approved: "Approved",
  returned: "Returned",
};

/** Nominal speeds archivists log; "other" takes a value. 33⅓ is stored as 33.33. */
export const nominalSpeeds = [78, 80, 33.33, 45] as const;

const text = (max: number, what: string) =>
  cleanString().trim().max(max, `${what}: at most ${max} characters.`);
const optionalText = (max: number, what: string) => text(max, what).default("");
const year = z.coerce
  .number({ error: "Give a year as four digits." })
  .int("Give a whole year.")
  .min(1877, "Sound recording on discs begins after 1877.")
  .max(2100, "That year is in the future.");

/** Empty strings from forms and spreadsheets mean "not given". */
export const blankToUndefined = (v: unknown) => (v === "" || v === null ? undefined : v);

export const sideInputSchema = z.object({
  id: z.uuid().optional(),
  designation: text(20, "Side").min(1, "Give the side designation (A, B, 1, 2 …)."),
  matrixNumber: optionalText(120, "Matrix number"),
  take: optionalText(40, "Take"),
  title: optionalText(500, "Title"),
  performers: optionalText(1000, "Performers"),
  notes: optionalText(4000, "Notes"),
});

export const discFieldsSchema = z
  .object({
    accessionId: z.uuid({ error: "Choose the accession this disc came in." }),
    shelfMark: text(80, "Shelf mark").min(1, "Give the shelf mark."),
    labelName: optionalText(200, "Label"),
    catalogueNumber: optionalText(120, "Catalogue number"),
    format: z.enum(discFormats, { error: `Format must be one of: ${discFormats.join(", ")}.` }),
    base: z.preprocess(
      blankToUndefined,
      z.enum(discBases, { error: `Base must be one of: ${discBases.join(", ")}.` }).optional(),
    ),
    diameterIn: z.preprocess(
      blankToUndefined,
      z.coerce
        .number({ error: "Diameter must be a number of inches." })
        .positive("Diameter must be above 0.")
        .max(24, "Diameter over 24 inches? Check the unit (inches).")
        .optional(),
    ),
    nominalSpeedRpm: z.coerce
      .number({ error: "Nominal speed must be a number (rpm)." })
      .positive("Speed must be above 0 rpm.")
      .max(200, "Speed over 200 rpm? Check the value."),
    groove: z.enum(["coarse", "micro"], { error: "Groove must be coarse or micro." }),
    cut: z.enum(["lateral", "vertical"], { error: "Cut must be lateral or vertical." }),
    recordingDate: z.preprocess(
      blankToUndefined,
      z.iso.date({ error: "Recording date must be YYYY-MM-DD." }).optional(),
    ),
    recordedFromYear: z.preprocess(blankToUndefined, year.optional()),
    recordedToYear: z.preprocess(blankToUndefined, year.optional()),
    conditionGrade: z.preprocess(
      blankToUndefined,
      z
        .enum(conditionGrades, { error: `Condition must be one of: ${conditionGrades.join(", ")}.` })
        .default("unassessed"),
    ),
    conditionFlags: z
      .array(z.enum(conditionFlags, { error: `Condition flags are: ${conditionFlags.join(", ")}.` }))
      .default([]),
    conditionNotes: optionalText(4000, "Condition notes"),
    handlingNotes: optionalText(4000, "Handling notes"),
  })
  .refine(
    (d) =>
      d.recordedFromYear === undefined ||
      d.recordedToYear === undefined ||
      d.recordedFromYear <= d.recordedToYear,
    {
      path: ["recordedToYear"],
      message: "The year range runs backwards: the 'to' year is before the 'from' year.",
    },
  )
  .refine(
    (d) =>
      d.base === undefined ||
      d.format === "instantaneous_lacquer" ||
      d.format === "transcription" ||
      d.format === "other",
    {
      path: ["base"],
      message: "A base is recorded for lacquer and transcription discs only.",
    },
  );

const sidesSchema = z.array(sideInputSchema).max(8, "At most 8 sides.").default([]);

export const createDiscSchema = discFieldsSchema.and(z.object({ sides: sidesSchema }));
export type DiscInput = z.infer<typeof createDiscSchema>;

/** An edit carries the version it was made from: a newer version in the database is a conflict. */
export const updateDiscSchema = discFieldsSchema.and(
  z.object({ version: z.coerce.number().int().positive(), sides: sidesSchema }),
);

export const accessionSchema = z.object({
  identifier: text(80, "Identifier").min(1, "Give the accession identifier."),
  source: text(500, "Source").min(1, "Say where the accession came from."),
  receivedOn: z.iso.date({ error: "Date received must be YYYY-MM-DD." }),
  notes: optionalText(4000, "Notes"),
});

export const discListQuerySchema = z.object({
  q: z.string().trim().max(200).optional(),
  format: z
    .enum(discFormats, {
      error: (issue) =>
        `There is no format “${String(issue.input)}”; the formats are ${discFormats.join(", ")}.`,
    })
    .optional(),
  status: z
    .enum(sideStatuses, {
      error: (issue) =>
        `There is no side status “${String(issue.input)}”; the statuses are ${sideStatuses.join(", ")}.`,
    })
    .optional(),
  accession: z.uuid().optional(),
  engineer: z.uuid().optional(),
  speed: z.coerce.number().positive().optional(),
  sort: z
    .enum([
      "shelfMark",
      "labelName",
      "catalogueNumber",
      "title",
      "year",
      "format",
      "speed",
      "updatedAt",
      "-shelfMark",
      "-labelName",
      "-catalogueNumber",
      "-title",
      "-year",
      "-format",
      "-speed",
      "-updatedAt",
    ])
    .default("shelfMark"),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
});
export type DiscListQuery = z.infer<typeof discListQuerySchema>;

export const transitionSchema = z.object({
  to: z.enum(sideStatuses, { error: "Unknown status." }),
  reason: z.string().trim().max(2000).optional(),
});

export const assignSchema = z
  .object({
    engineerId: z.uuid({ error: "Choose a transfer engineer." }),
    sideIds: z.array(z.uuid()).max(5000).default([]),
    discIds: z.array(z.uuid()).max(5000).default([]),
  })
  .refine((v) => v.sideIds.length + v.discIds.length > 0, {
    path: ["sideIds"],
    message: "Choose at least one side or disc.",
  });
