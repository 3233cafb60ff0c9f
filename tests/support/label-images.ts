// Adding label images through the real API, as the archivist's browser does: start (the
// server answers a presigned URL), PUT the bytes straight to the bucket, complete.
import sharp from "sharp";
import { expect } from "vitest";
import { api, type Json } from "./app";
import { sha256Of } from "./pipeline";

/** A small invented label: a coloured disc with a centre hole, as PNG, JPEG or TIFF. */
export async function labelPicture(format: "png" | "jpeg" | "tiff", size = 640): Promise<Buffer> {
  const svg = Buffer.from(
    `<svg xmlns="http://www.w3.org/2000/svg" width="${size}" height="${size}">` +
      `<rect width="100%" height="100%" fill="#f4efe6"/>` +
      `<circle cx="${size / 2}" cy="${size / 2}" r="${size * 0.45}" fill="#7a2e1f"/>` +
      `<circle cx="${size / 2}" cy="${size / 2}" r="${size * 0.03}" fill="#f4efe6"/></svg>`,
  );
  const img = sharp(svg);
  return format === "png"
    ? img.png().toBuffer()
    : format === "jpeg"
      ? img.jpeg().toBuffer()
      : img.tiff().toBuffer();
}

export async function addLabelImage(
  cookie: string,
  discId: string,
  bytes: Uint8Array,
  opts: { kind: "label" | "sleeve"; sideId?: string; contentType: string; fileName: string },
): Promise<{ status: number; body: Json; labelImageId?: string }> {
  const start = await api(`/api/discs/${discId}/label-images`, {
    cookie,
    method: "POST",
    body: {
      kind: opts.kind,
      sideId: opts.sideId,
      fileName: opts.fileName,
      bytes: bytes.length,
      contentType: opts.contentType,
    },
  });
  if (start.status !== 201) return start;
  const put = await fetch(start.body.url, {
    method: "PUT",
    headers: start.body.headers,
    body: Buffer.from(bytes),
  });
  expect(put.status).toBe(200);
  const done = await api(`/api/label-images/${start.body.labelImageId}/complete`, {
    cookie,
    method: "POST",
    body: { sha256: sha256Of(bytes) },
  });
  return { ...done, labelImageId: start.body.labelImageId };
}
