import "server-only";
import { Readable } from "node:stream";
import { z } from "zod";
import { db } from "../../db";
import { AppError } from "../http/errors";
import { planAccessionBag, planDiscBag, preflight, runDelivery, deliveryTarget, zipBag } from "./bag";
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

/** The BagIt package as a streamed zip, after the checks that can answer plainly before any byte goes out. */
async function bagDownload(
  plan: Awaited<ReturnType<typeof planDiscBag>>,
  actorId: string,
): Promise<Response> {
  await preflight(plan);
  return download(
    Readable.toWeb(zipBag(plan, actorId)) as ReadableStream,
    "application/zip",
    `${plan.name}.zip`,
  );
}

export async function exportDisc(discId: string, input: unknown, actorId: string): Promise<Response> {
  const { format } = exportQuerySchema.parse(input);
  if (format === "zip") return bagDownload(await planDiscBag(discId), actorId);
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

export async function exportAccession(
  accessionId: string,
  input: unknown,
  actorId: string,
): Promise<Response> {
  const { format } = exportQuerySchema.parse(input);
  if (format === "zip") return bagDownload(await planAccessionBag(accessionId), actorId);
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

/**
 * A curator asks for the bag to be written into the delivery bucket. The bag is made by
 * this server in the background (streaming, memory flat); its row says where it stands.
 * The checks that can fail at once (not approved, a file missing or failing fixity) answer now;
 * the writing then uses that same plan, read and checked once.
 */
export async function requestDelivery(
  actorId: string,
  scope: "disc" | "accession",
  id: string,
): Promise<{ deliveryId: string; state: string }> {
  const plan = scope === "disc" ? await planDiscBag(id) : await planAccessionBag(id);
  await preflight(plan);
  const { bucket, prefix } = deliveryTarget();
  const row = await db
    .insertInto("bag_deliveries")
    .values({
      scope,
      disc_id: scope === "disc" ? id : null,
      accession_id: scope === "accession" ? id : null,
      bucket,
      prefix: `${prefix}${plan.name}/`,
      requested_by: actorId,
      requested_at: plan.at,
    })
    .returning(["id", "state"])
    .executeTakeFirstOrThrow();
  void runDelivery(row.id, plan);
  return { deliveryId: row.id, state: row.state };
}

/** The deliveries of a disc or an accession, newest first. */
export async function listDeliveries(scope: "disc" | "accession", id: string) {
  return db
    .selectFrom("bag_deliveries as b")
    .innerJoin("users as u", "u.id", "b.requested_by")
    .select([
      "b.id",
      "b.state",
      "b.bucket",
      "b.prefix",
      "b.payload_oxum as payloadOxum",
      "b.tagmanifest_sha256 as tagmanifestSha256",
      "b.error",
      "b.requested_at as requestedAt",
      "b.finished_at as finishedAt",
      "u.name as requestedBy",
    ])
    .where(scope === "disc" ? "b.disc_id" : "b.accession_id", "=", id)
    .orderBy("b.requested_at", "desc")
    .limit(20)
    .execute();
}
