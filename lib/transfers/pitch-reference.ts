import "server-only";
import { z } from "zod";
import { db } from "../../db";
import { decodeFrames, estimatePitch, PitchError, proposedCutSpeed, readWavHeader } from "../audio";
import { AppError } from "../http/errors";
import { objectSource } from "../storage/objects";

/** The longest window measured, seconds: enough for hum at a fraction of a hertz, little to read. */
export const MAX_PITCH_WINDOW_SECONDS = 30;

export const pitchReferenceSchema = z.object({
  referenceHz: z.coerce
    .number({ error: "The reference must be a number of Hz." })
    .min(20, "The reference must be at least 20 Hz.")
    .max(10_000, "A reference above 10 kHz? Name the fundamental of the note."),
  startSeconds: z.coerce
    .number({ error: "The window's start must be a number of seconds." })
    .min(0, "The window starts at 0 s or later."),
  lengthSeconds: z.coerce
    .number({ error: "The window's length must be a number of seconds." })
    .min(0.1, "Take a window of at least 0.1 s.")
    .max(MAX_PITCH_WINDOW_SECONDS, `Take a window of at most ${MAX_PITCH_WINDOW_SECONDS} s.`),
  transferSpeedRpm: z.coerce
    .number({ error: "The speed it was transferred at must be a number (rpm)." })
    .positive("The speed it was transferred at must be above 0 rpm.")
    .max(200, "The speed it was transferred at, over 200 rpm? Check the value."),
});

/**
 * The pitch reference of a side (lib/audio/pitch.ts): the spectrum peak near a reference the
 * engineer names, in a window of the side's current flat transfer, and the cut speed it implies
 * (transfer speed × reference ÷ found). Reads only the window from the bucket; records nothing:
 * the engineer accepts the speed into the curve choice, which is recorded with its reason.
 */
export async function measurePitchReference(sideId: string, input: unknown) {
  const p = pitchReferenceSchema.parse(input);
  const side = await db
    .selectFrom("sides as s")
    .leftJoin("transfers as t", "t.id", "s.current_transfer_id")
    .select(["s.id", "t.id as transferId", "t.object_key as objectKey"])
    .where("s.id", "=", sideId)
    .executeTakeFirst();
  if (!side) throw new AppError("not_found", 404, "That side does not exist.");
  if (!side.transferId || !side.objectKey)
    throw new AppError("conflict", 409, "The side has no flat transfer yet: upload it first.");
  const source = await objectSource(side.objectKey);
  const header = await readWavHeader(source);
  const fs = header.sampleRateHz;
  const start = Math.round(p.startSeconds * fs);
  const frames = Math.round(p.lengthSeconds * fs);
  const seconds = header.frames / fs;
  if (start + frames > header.frames)
    throw new AppError(
      "invalid",
      422,
      `The transfer is ${seconds.toFixed(2)} s long: the window ${p.startSeconds}–${p.startSeconds + p.lengthSeconds} s runs past its end.`,
      { startSeconds: [`The window must end by ${seconds.toFixed(2)} s.`] },
    );
  const bytes = await source.read(header.dataOffset + start * header.blockAlign, frames * header.blockAlign);
  const channels = decodeFrames(
    bytes,
    { format: header.format, bitsPerSample: header.bitsPerSample },
    header.channels,
  );
  const mono = new Float64Array(frames);
  for (const ch of channels) for (let i = 0; i < frames; i++) mono[i] += ch[i] / channels.length;
  try {
    const e = estimatePitch(mono, fs, p.referenceHz);
    return {
      transferId: side.transferId,
      referenceHz: p.referenceHz,
      window: { startSeconds: p.startSeconds, lengthSeconds: p.lengthSeconds },
      transferSpeedRpm: p.transferSpeedRpm,
      ...e,
      proposedCutSpeedRpm: proposedCutSpeed(p.transferSpeedRpm, p.referenceHz, e.peakHz),
    };
  } catch (err) {
    if (err instanceof PitchError)
      throw new AppError("invalid", 422, err.message, { lengthSeconds: [err.message] });
    throw err;
  }
}
