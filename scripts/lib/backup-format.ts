// What `npm run backup` writes and `npm run restore` reads: the backup's description
// (backup.json), its manifest of objects (manifest.json), and the small helpers both
// scripts share (the PostgreSQL client programs, connection settings, safe object paths).
import { createHash } from "node:crypto";
import { existsSync, readdirSync, createReadStream } from "node:fs";
import path from "node:path";
import { z } from "zod";

export const dumpFile = "database.dump";
export const manifestFile = "manifest.json";
export const descriptionFile = "backup.json";
export const objectsDir = "objects";

const sha256 = z.string().regex(/^[0-9a-f]{64}$/);

export const manifestObjectSchema = z.object({
  kind: z.enum(["transfer", "render", "checkpoint", "label_image", "label_thumbnail"]),
  /** The row that names the object (a transfer's, render's or label image's id, a checkpoint note's id). */
  id: z.string(),
  key: z.string().min(1),
  /** Size and SHA-256 as the record keeps them; a checkpoint's and a thumbnail's are measured when copied. */
  bytes: z.number().int().nonnegative().nullable(),
  sha256: sha256.nullable(),
  /** Where the size and hash come from: the database's record, or measured while copying. */
  source: z.enum(["record", "measured", "none"]),
});
export type ManifestObject = z.infer<typeof manifestObjectSchema>;

export const manifestSchema = z.object({
  kind: z.literal("rillbook.backup-manifest"),
  version: z.literal(1),
  objects: z.array(manifestObjectSchema),
});
export type Manifest = z.infer<typeof manifestSchema>;

export const descriptionSchema = z.object({
  kind: z.literal("rillbook.backup"),
  version: z.literal(1),
  software: z.string(),
  startedAt: z.string(),
  finishedAt: z.string(),
  database: z.object({
    name: z.string(),
    serverVersion: z.string(),
    dumpVersion: z.string(),
    file: z.literal(dumpFile),
    bytes: z.number().int().nonnegative(),
    sha256,
    snapshot: z.string(),
    lastMigration: z.string().nullable(),
  }),
  chainHead: z.object({ seq: z.number().int().positive(), hash: sha256 }).nullable(),
  counts: z.object({
    provenanceEvents: z.number().int().nonnegative(),
    discs: z.number().int().nonnegative(),
    sides: z.number().int().nonnegative(),
    transfers: z.number().int().nonnegative(),
    renders: z.number().int().nonnegative(),
    checkpoints: z.number().int().nonnegative(),
    /** Stored label images (each an original and its thumbnail); absent from backups taken before they were kept. */
    labelImages: z.number().int().nonnegative().optional(),
    objects: z.number().int().nonnegative(),
    objectBytes: z.number().int().nonnegative(),
  }),
  withObjects: z.boolean(),
  bucket: z.object({ endpoint: z.string(), name: z.string() }),
  note: z.string(),
});
export type BackupDescription = z.infer<typeof descriptionSchema>;

/** The type an object is put back with: what the app stored it as (a label image's by its key's extension). */
export function objectContentType(o: Pick<ManifestObject, "kind" | "key">): string {
  switch (o.kind) {
    case "checkpoint":
      return "application/json";
    case "label_thumbnail":
      return "image/jpeg";
    case "label_image": {
      const ext = path.extname(o.key).toLowerCase();
      return ext === ".png" ? "image/png" : ext === ".tif" ? "image/tiff" : "image/jpeg";
    }
    default:
      return "audio/wav";
  }
}

/** The directory of PostgreSQL's client programs: the newest Debian server package's, or PATH. */
export function pgProgram(name: "pg_dump" | "pg_restore"): string {
  const base = "/usr/lib/postgresql";
  const versions = existsSync(base)
    ? readdirSync(base).filter((v) => existsSync(path.join(base, v, "bin", name)))
    : [];
  versions.sort((a, b) => Number(b) - Number(a));
  return versions[0] ? path.join(base, versions[0], "bin", name) : name;
}

/**
 * A connection URL split for libpq's client programs: the password goes in PGPASSWORD
 * (never on the command line, where `ps` would show it), the rest in --dbname.
 */
export function pgConnection(url: string): { dbname: string; env: Record<string, string> } {
  const u = new URL(url);
  const password = decodeURIComponent(u.password);
  u.password = "";
  return { dbname: u.toString(), env: password ? { PGPASSWORD: password } : {} };
}

export function databaseNameOf(url: string): string {
  return decodeURIComponent(new URL(url).pathname.replace(/^\//, "")) || "postgres";
}

/** DIR/objects/<key>, refusing a key that would leave the folder. */
export function objectPath(dir: string, key: string): string {
  const base = path.resolve(dir, objectsDir);
  const p = path.resolve(base, key);
  if (key.startsWith("/") || key.split("/").includes("..") || !p.startsWith(`${base}${path.sep}`))
    throw new Error(`refusing an object key that leaves the backup folder: ${key}`);
  return p;
}

export async function hashFile(file: string): Promise<{ sha256: string; bytes: number }> {
  const hash = createHash("sha256");
  let bytes = 0;
  for await (const chunk of createReadStream(file)) {
    hash.update(chunk as Buffer);
    bytes += (chunk as Buffer).length;
  }
  return { sha256: hash.digest("hex"), bytes };
}
