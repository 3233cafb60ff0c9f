// The JSON the lab stores beside its records (curve specifications, render filter
// records), as zod schemas: parsed wherever they come back in from the database, so a
// row that does not hold what it should is an error that names the row, never a guess.
import { z } from "zod";
import { curveSpecSchema } from "./curves";

/** A curve as a curve choice or preset version stores it (lib/curves CurveSpec). */
export const storedCurveSpecSchema = curveSpecSchema;
export type StoredCurveSpec = z.infer<typeof storedCurveSpecSchema>;

const sosRow = z.tuple([z.number(), z.number(), z.number(), z.number(), z.number(), z.number()]);

/** What a finished render records of the filter that made it (lib/jobs/render-job.ts). */
export const renderFilterRecordSchema = z.object({
  kind: z.string(),
  taps: z.number().int().positive(),
  tapsSha256: z.string().regex(/^[0-9a-f]{64}$/),
  delaySamples: z.number(),
  maxErrorDb: z.number(),
  maxPhaseErrorDeg: z.number(),
  sampleRateHz: z.number().positive(),
  sections: z.array(sosRow),
  spec: storedCurveSpecSchema,
  /** Speed corrected: the curve the filter ran (the reference moved with the corners, lib/curves speedCorrectedSpec). */
  filterSpec: storedCurveSpecSchema.optional(),
  /** Speed corrected: cut ÷ transfer, and the rate the transfer was resampled from (its rate × factor). */
  speedCorrection: z
    .object({
      cutSpeedRpm: z.number().positive(),
      transferSpeedRpm: z.number().positive(),
      factor: z.number().positive(),
      playedAtHz: z.number().positive(),
    })
    .optional(),
  software: z.string(),
  engine: z.string().optional(),
});
export type StoredRenderFilter = z.infer<typeof renderFilterRecordSchema>;

/** Parses one stored JSON value; a mismatch names the table, the row and the field. */
export function parseStored<T>(
  schema: z.ZodType<T>,
  value: unknown,
  where: { table: string; id: string; column: string },
): T {
  const r = schema.safeParse(value);
  if (r.success) return r.data;
  const issue = r.error.issues[0];
  throw new Error(
    `${where.table} ${where.id}: ${where.column}${issue?.path.length ? `.${issue.path.join(".")}` : ""} ` +
      `does not hold what it should (${issue?.message ?? "invalid"}).`,
  );
}
