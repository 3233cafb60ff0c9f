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
export const grooves = ["coarse", "micro"] as const;
export const cuts = ["lateral", "vertical"] as const;

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

/**
 * A refinement across fields runs when those fields parsed, whatever happened to the others,
 * so a row with a bad format still hears that its year range runs backwards.
 */
function whenFieldsParsed(...fields: string[]) {
  return (payload: { issues: readonly { path?: readonly PropertyKey[] }[] }) =>
    !payload.issues.some((i) => fields.includes(String(i.path?.[0] ?? "")));
}

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
        .number({ error: "Diameter must be a number of inches, for example 10." })
        .positive("Diameter must be above 0.")
        .max(24, "Diameter over 24 inches? Check the unit (inches).")
        .optional(),
    ),
    nominalSpeedRpm: z.preprocess(
      blankToUndefined,
      z.coerce
        .number({ error: "Nominal speed must be a number (rpm), for example 78." })
        .positive("Speed must be above 0 rpm.")
        .max(200, "Speed over 200 rpm? Check the value."),
    ),
    groove: z.enum(grooves, { error: "Groove must be coarse or micro." }),
    cut: z.enum(cuts, { error: "Cut must be lateral or vertical." }),
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
      // Checked whenever both years are good, even beside a bad value in another field.
      when: whenFieldsParsed("recordedFromYear", "recordedToYear"),
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
      when: whenFieldsParsed("base", "format"),
    },
  );

/**
 * A side's catalogue fields as stored and read back. With `storedDiscSchema`, the one shape
 * of a disc: the record (lib/catalogue/records.ts), the spreadsheet's rows
 * (lib/catalogue/csv-format.ts) and the form's values (components/catalogue) derive from it.
 */
export const storedSideSchema = z.object({
  designation: z.string(),
  matrixNumber: z.string(),
  take: z.string(),
  title: z.string(),
  performers: z.string(),
  notes: z.string(),
});
export type StoredSide = z.infer<typeof storedSideSchema>;

/** A disc's catalogue fields as stored and read back (what is not given is null). */
export const storedDiscSchema = z.object({
  accessionId: z.string(),
  shelfMark: z.string(),
  labelName: z.string(),
  catalogueNumber: z.string(),
  format: z.enum(discFormats),
  base: z.enum(discBases).nullable(),
  diameterIn: z.number().nullable(),
  nominalSpeedRpm: z.number(),
  groove: z.enum(grooves),
  cut: z.enum(cuts),
  recordingDate: z.string().nullable(),
  recordedFromYear: z.number().int().nullable(),
  recordedToYear: z.number().int().nullable(),
  conditionGrade: z.enum(conditionGrades),
  conditionFlags: z.array(z.string()),
  conditionNotes: z.string(),
  handlingNotes: z.string(),
});
export type StoredDisc = z.infer<typeof storedDiscSchema>;
export type StoredDiscField = keyof StoredDisc;
export const storedDiscFields = Object.keys(storedDiscSchema.shape) as StoredDiscField[];
export const storedSideFields = Object.keys(storedSideSchema.shape) as (keyof StoredSide)[];

/** A checked disc as it will be stored: what the input leaves out is null. */
export function toStoredDisc(d: z.infer<typeof discFieldsSchema>): StoredDisc {
  return {
    ...d,
    base: d.base ?? null,
    diameterIn: d.diameterIn ?? null,
    recordingDate: d.recordingDate ?? null,
    recordedFromYear: d.recordedFromYear ?? null,
    recordedToYear: d.recordedToYear ?? null,
  };
}

export function toStoredSide(s: z.infer<typeof sideInputSchema>): StoredSide {
  return {
    designation: s.designation,
    matrixNumber: s.matrixNumber,
    take: s.take,
    title: s.title,
    performers: s.performers,
    notes: s.notes,
  };
}

/** The most sides a disc may have. */
export const maxSidesPerDisc = 8;
export const tooManySidesMessage = `At most ${maxSidesPerDisc} sides.`;
const sidesSchema = z.array(sideInputSchema).max(maxSidesPerDisc, tooManySidesMessage).default([]);

export const createDiscSchema = discFieldsSchema.and(z.object({ sides: sidesSchema }));
export type DiscInput = z.infer<typeof createDiscSchema>;

/** An edit carries the version it was made from: a newer version in the database is a conflict. */
export const updateDiscSchema = discFieldsSchema.and(
  z.object({ version: z.coerce.number().int().positive(), sides: sidesSchema }),
);
export type DiscEdit = z.infer<typeof updateDiscSchema>;

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
