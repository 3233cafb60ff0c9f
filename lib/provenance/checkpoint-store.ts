import { randomUUID } from "node:crypto";
import {
  GetObjectCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  PutObjectCommand,
} from "@aws-sdk/client-s3";
import { z } from "zod";
import { AppError } from "../http/errors";
import { env } from "../env";
import { s3 } from "../storage/s3";

/**
 * Checkpoints of the provenance chain, as objects in the lab's bucket. Each is written
 * once under a key the server makes and is never replaced; in production the bucket's
 * object lock keeps it from being deleted or overwritten (README, "The bucket").
 * Verification reads these objects, not the database's notes of them, since whoever can
 * rewrite the log can rewrite those rows too.
 */
export const checkpointPrefix = "provenance/checkpoints/";

export const checkpointSchema = z.object({
  kind: z.literal("rillbook.chain-checkpoint"),
  version: z.literal(1),
  lab: z.string(),
  /** The newest entry of the log at the time: its seq and hash, and how many entries the log then held. */
  headSeq: z.number().int().positive(),
  headHash: z.string().regex(/^[0-9a-f]{64}$/),
  events: z.number().int().positive(),
  takenAt: z.iso.datetime(),
  reason: z.enum(["scheduled", "requested"]),
});

export type Checkpoint = z.infer<typeof checkpointSchema>;
export interface StoredCheckpoint extends Checkpoint {
  key: string;
}

/** A fresh key: time, head seq and a random part, so no two checkpoints ever share one. */
export function newCheckpointKey(cp: Pick<Checkpoint, "takenAt" | "headSeq">): string {
  const stamp = cp.takenAt.replace(/[:.]/g, "-");
  return `${checkpointPrefix}${stamp}_seq${String(cp.headSeq).padStart(12, "0")}_${randomUUID()}.json`;
}

function statusOf(err: unknown): number | undefined {
  return (err as { $metadata?: { httpStatusCode?: number } })?.$metadata?.httpStatusCode;
}

async function objectExists(key: string): Promise<boolean> {
  try {
    await s3().send(new HeadObjectCommand({ Bucket: env().S3_BUCKET, Key: key }));
    return true;
  } catch (err) {
    if (statusOf(err) === 404 || (err as Error)?.name === "NotFound") return false;
    throw err;
  }
}

const refused = (key: string) =>
  new AppError(
    "conflict",
    409,
    `A checkpoint is already stored at ${key}; checkpoints are never overwritten.`,
  );

/**
 * Writes one checkpoint object, refusing to replace anything at that key. The put is
 * conditional (If-None-Match: *), which S3 enforces atomically; the local s3rver ignores
 * that header, so the key is also looked up first and an existing object refused.
 */
export async function putCheckpointObject(key: string, cp: Checkpoint): Promise<void> {
  if (!key.startsWith(checkpointPrefix) || key.includes(".."))
    throw new Error(`not a checkpoint key: ${key}`);
  const body = `${JSON.stringify(checkpointSchema.parse(cp), null, 2)}\n`;
  if (await objectExists(key)) throw refused(key);
  try {
    await s3().send(
      new PutObjectCommand({
        Bucket: env().S3_BUCKET,
        Key: key,
        Body: body,
        ContentType: "application/json",
        IfNoneMatch: "*",
      }),
    );
  } catch (err) {
    if (statusOf(err) === 412 || statusOf(err) === 409) throw refused(key);
    throw err;
  }
}

export interface CheckpointRead {
  checkpoints: StoredCheckpoint[];
  /** Objects under the checkpoint prefix that are not a readable checkpoint. */
  unreadable: { key: string; reason: string }[];
}

/** Every checkpoint object in the bucket, oldest head first. */
export async function readCheckpointObjects(): Promise<CheckpointRead> {
  const keys: string[] = [];
  let token: string | undefined;
  do {
    const page = await s3().send(
      new ListObjectsV2Command({
        Bucket: env().S3_BUCKET,
        Prefix: checkpointPrefix,
        ContinuationToken: token,
      }),
    );
    for (const o of page.Contents ?? []) if (o.Key) keys.push(o.Key);
    token = page.IsTruncated ? page.NextContinuationToken : undefined;
  } while (token);

  const checkpoints: StoredCheckpoint[] = [];
  const unreadable: CheckpointRead["unreadable"] = [];
  for (let i = 0; i < keys.length; i += 16) {
    await Promise.all(
      keys.slice(i, i + 16).map(async (key) => {
        try {
          const res = await s3().send(new GetObjectCommand({ Bucket: env().S3_BUCKET, Key: key }));
          const parsed = checkpointSchema.safeParse(JSON.parse(await res.Body!.transformToString("utf8")));
          if (parsed.success) checkpoints.push({ ...parsed.data, key });
          else unreadable.push({ key, reason: "it is not a checkpoint this version can read" });
        } catch (err) {
          unreadable.push({
            key,
            reason:
              err instanceof SyntaxError
                ? "it is not valid JSON"
                : `it could not be read (${(err as Error)?.name ?? "error"})`,
          });
        }
      }),
    );
  }
  checkpoints.sort(
    (a, b) => a.headSeq - b.headSeq || a.takenAt.localeCompare(b.takenAt) || a.key.localeCompare(b.key),
  );
  unreadable.sort((a, b) => a.key.localeCompare(b.key));
  return { checkpoints, unreadable };
}
