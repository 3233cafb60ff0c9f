import "server-only";
import { Readable } from "node:stream";
import { z } from "zod";
import { db } from "../../db";
import { AppError } from "../http/errors";
import { discPackage } from "./package";
import { premisXml } from "./premis";
import { discRecord, fileNameBase, premisRecord } from "./record";

const exportQuerySchema = z.object({
  format: z.enum(["json", "premis", "zip"], { error: "format is json, premis or zip." }).default("json"),
});

function download(body: BodyInit, type: string, fileName: string): Response {
  return new Response(body, {
    headers: {
      "content-type": type,
      "content-disposition": `attachment; filename="${fileName}"`,
      "cache-control": "no-store",
    },
  });
}

export async function exportDisc(discId: string, input: unknown): Promise<Response> {
  const { format } = exportQuerySchema.parse(input);
  if (format === "zip") {
    const pkg = await discPackage(discId);
    return download(Readable.toWeb(pkg.stream) as ReadableStream, "application/zip", pkg.fileName);
  }
  const record = await discRecord(discId);
  const base = fileNameBase(record.disc.shelfMark);
  if (format === "premis")
    return download(
      premisXml(premisRecord([record])),
      "application/xml; charset=utf-8",
      `${base}-premis.xml`,
    );
  return download(
    `${JSON.stringify(record, null, 2)}\n`,
    "application/json; charset=utf-8",
    `${base}-record.json`,
  );
}

export async function exportAccession(accessionId: string, input: unknown): Promise<Response> {
  const { format } = exportQuerySchema.parse(input);
  if (format === "zip")
    throw new AppError(
      "invalid",
      422,
      "Packages are made per approved disc; export the accession as json or premis.",
      { format: ["Use json or premis."] },
    );
  if (!/^[0-9a-f-]{36}$/i.test(accessionId)) throw new AppError("not_found", 404, "No such accession.");
  const accession = await db
    .selectFrom("accessions")
    .select(["id", "identifier"])
    .where("id", "=", accessionId)
    .executeTakeFirst();
  if (!accession) throw new AppError("not_found", 404, "No such accession.");
  const discs = await db
    .selectFrom("discs")
    .select("id")
    .where("accession_id", "=", accessionId)
    .orderBy("shelf_mark")
    .execute();
  const records = [];
  for (const d of discs) records.push(await discRecord(d.id));
  const base = fileNameBase(accession.identifier);
  if (format === "premis") {
    if (!records.length) throw new AppError("conflict", 409, "The accession has no discs to describe yet.");
    return download(premisXml(premisRecord(records)), "application/xml; charset=utf-8", `${base}-premis.xml`);
  }
  return download(
    `${JSON.stringify({ accession, discs: records }, null, 2)}\n`,
    "application/json; charset=utf-8",
    `${base}-record.json`,
  );
}
