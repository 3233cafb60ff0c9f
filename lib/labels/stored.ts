import "server-only";
// The disc's stored label images, as one query: the disc page's list (lib/labels/images.ts)
// and the disc's record and bag (lib/exports) both read them here. No image library is
// loaded: reading the record does not need one.
import { sql } from "kysely";
import { db } from "../../db";
import type { LabelImageFormat } from "../../db/types";

/** The file extension a stored label image's format is given, in its key and in a bag. */
export const labelImageExtension: Record<LabelImageFormat, string> = { jpeg: "jpg", png: "png", tiff: "tif" };

/** The disc's stored label images: sides in order (each side's by when they were stored), then the sleeve. */
export async function storedLabelImages(discId: string) {
  const rows = await db
    .selectFrom("label_images as l")
    .leftJoin("sides as s", "s.id", "l.side_id")
    .innerJoin("users as u", "u.id", "l.uploaded_by")
    .select([
      "l.id",
      "l.kind",
      "l.side_id as sideId",
      "s.designation as side",
      "l.object_key as objectKey",
      "l.file_name as fileName",
      "l.format",
      "l.width",
      "l.height",
      "l.bytes",
      "l.sha256",
      "l.stored_at as storedAt",
      "u.name as uploadedBy",
    ])
    .where("l.disc_id", "=", discId)
    .where("l.state", "=", "stored")
    .orderBy(sql`l.kind = 'sleeve'`)
    .orderBy("s.designation")
    .orderBy("l.stored_at")
    .execute();
  // A stored image has all of these (the table's label_images_stored check).
  return rows.map((r) => ({
    ...r,
    format: r.format!,
    bytes: Number(r.bytes),
    sha256: r.sha256!,
    storedAt: r.storedAt!,
  }));
}

export type StoredLabelImage = Awaited<ReturnType<typeof storedLabelImages>>[number];
