import "server-only";
import { createHash } from "node:crypto";
import { PassThrough, Readable } from "node:stream";
import yazl from "yazl";
import { AppError } from "../http/errors";
import { objectStream } from "../storage/objects";
import { premisXml } from "./premis";
import { discRecord, fileNameBase, premisRecord } from "./record";

function sha256(text: string): string {
  return createHash("sha256").update(text, "utf8").digest("hex");
}

/**
 * A package a repository can ingest and verify: the access copies, the record as JSON,
 * the PREMIS XML and manifest-sha256.txt (the `sha256sum -c` format) listing the SHA-256
 * of every file in it. Streamed: the audio goes from the bucket into the zip without
 * being held in memory. Only for a disc whose every side is approved.
 */
export async function discPackage(discId: string): Promise<{ fileName: string; stream: Readable }> {
  const record = await discRecord(discId);
  const unapproved = record.disc.sides.filter((s) => s.status !== "approved");
  if (!record.disc.sides.length || unapproved.length) {
    throw new AppError(
      "conflict",
      409,
      `Only an approved disc is packaged: ${
        unapproved.length
          ? `side ${unapproved.map((s) => s.designation).join(", ")} ${unapproved.length > 1 ? "are" : "is"} not approved yet`
          : "it has no sides"
      }.`,
    );
  }
  const base = fileNameBase(record.disc.shelfMark);
  const json = `${JSON.stringify(record, null, 2)}\n`;
  const xml = premisXml(premisRecord([record]));
  // Each side's access copy is the render its approval names, never simply the latest.
  const copies = new Map(record.accessCopies.map((a) => [a.id, a]));
  const manifest: string[] = [];
  const zip = new yazl.ZipFile();
  zip.addBuffer(Buffer.from(json), `${base}/record.json`);
  manifest.push(`${sha256(json)}  record.json`);
  zip.addBuffer(Buffer.from(xml), `${base}/premis.xml`);
  manifest.push(`${sha256(xml)}  premis.xml`);
  for (const side of record.disc.sides) {
    const approved = record.approved[side.id];
    const copy = approved ? copies.get(approved.render.id) : undefined;
    if (!copy?.objectKey || !copy.sha256 || copy.sha256 !== approved?.render.sha256)
      throw new AppError("conflict", 409, `Side ${side.designation} has no approved access copy.`);
    const name = `access/${base}-${side.designation.replace(/[^A-Za-z0-9]+/g, "_")}.wav`;
    const through = new PassThrough();
    zip.addReadStream(through, `${base}/${name}`, { compress: false, size: Number(copy.bytes) });
    objectStream(copy.objectKey).then(
      (s) => s.pipe(through),
      (err: unknown) => through.destroy(err as Error),
    );
    // The checksum recorded when the copy was stored (and passed fixity since): the
    // manifest then also proves the copy in the package is that one.
    manifest.push(`${copy.sha256}  ${name}`);
  }
  zip.addBuffer(Buffer.from(`${manifest.join("\n")}\n`), `${base}/manifest-sha256.txt`);
  zip.end();
  return { fileName: `${base}-package.zip`, stream: zip.outputStream as unknown as Readable };
}
