import "server-only";
// BagIt 1.0 packages (RFC 8493) of an approved disc, or of an accession's approved discs,
// for the repository: data/ holds the flat transfers (the masters), the access copies, the
// label images, the test-disc points files the curves rest on, record.json and premis.xml; manifest-sha256.txt and manifest-sha512.txt,
// bag-info.txt and tagmanifest-sha256.txt describe them. Two ways out share one writer:
// a streamed zip (yazl, ZIP64 past 4 GB) and plain files under the delivery prefix of a
// bucket (multipart uploads for big objects). Both stream: no payload file is held in memory.
//
// Checksums. Each stored object's SHA-256 in the manifest is the one Rillbook recorded when
// it was stored (and fixity has checked since), never one recomputed blindly: the bytes are
// hashed as they pass (SHA-256 and SHA-512 on the same read), and an object whose SHA-256
// differs from its record stops the bag and raises the fixity alert (lib/fixity). A late
// mismatch cannot leave a bag that claims a wrong checksum, because the tag files come
// last: the payload is written first, file by file, each verified at its end before the
// next begins; the manifests, bag-info.txt and tagmanifest are written only once every
// payload file has passed (a zip's central directory comes after them, and a delivery's
// bagit.txt, the file that makes a folder a bag, is its very last object). A stopped zip
// download is cut off with an error, before any manifest, so what the browser got is not
// a bag at all; a stopped delivery deletes what it wrote. Before a download starts, the
// objects' sizes are looked at and their last fixity results read, so the usual failures
// (a missing object, one already found damaged) answer a plain 409 before any byte goes out.
import { createHash } from "node:crypto";
import type { Readable } from "node:stream";
import { HeadObjectCommand } from "@aws-sdk/client-s3";
import { sql } from "kysely";
import { db } from "../../db";
import { env } from "../env";
import { recordFixityResult } from "../fixity";
import { openFixityAlerts } from "../fixity/requests";
import { leaseTimes } from "../jobs/render-lease";
import { AppError } from "../http/errors";
import { labelImageExtension } from "../labels/stored";
import { appendEvent } from "../provenance";
import { getSettings } from "../settings";
import { fromStore, isObjectMissing } from "../storage/errors";
import { s3 } from "../storage/s3";
import { softwareName } from "../version";
import {
  type BagPlan,
  type BagResult,
  type BagSink,
  bucketSink,
  type PayloadObject,
  PayloadMismatchError,
  type PayloadText,
  writeBagFiles,
  zipSink,
} from "./bag-writer";
import { baggingDate, bagStamp } from "./bagit";
import { premisXml } from "./premis";
import { type DiscRecordExport, discRecord, fileNameBase, premisRecord } from "./record";

export type { BagPlan, BagResult } from "./bag-writer";

/** The payload of one approved disc, its paths under `dir` ("data/" or "data/<shelf mark>/"). */
function discPayload(record: DiscRecordExport, dir: string) {
  const unapproved = record.disc.sides.filter((s) => s.status !== "approved");
  if (!record.disc.sides.length || unapproved.length) {
    throw new AppError(
      "conflict",
      409,
      `Only an approved disc is packaged: ${
        unapproved.length
          ? `side ${unapproved.map((s) => s.designation).join(", ")} of ${record.disc.shelfMark} ${unapproved.length > 1 ? "are" : "is"} not approved yet`
          : `${record.disc.shelfMark} has no sides`
      }.`,
    );
  }
  const base = fileNameBase(record.disc.shelfMark);
  const objects: PayloadObject[] = [];
  const copies = new Map(record.accessCopies.map((a) => [a.id, a]));
  const transfers = new Map(record.transfers.map((t) => [t.id, t]));
  for (const side of record.disc.sides) {
    // The side's masters and copies are those its approval binds, never simply the latest.
    const approved = record.approved[side.id];
    const transfer = approved ? transfers.get(approved.transfer.id) : undefined;
    const copy = approved ? copies.get(approved.render.id) : undefined;
    const sideName = fileNameBase(side.designation);
    if (!transfer || transfer.sha256 !== approved?.transfer.sha256)
      throw new AppError(
        "conflict",
        409,
        `Side ${side.designation} of ${record.disc.shelfMark} has no approved flat transfer.`,
      );
    if (!copy?.objectKey || !copy.sha256 || copy.sha256 !== approved?.render.sha256)
      throw new AppError(
        "conflict",
        409,
        `Side ${side.designation} of ${record.disc.shelfMark} has no approved access copy.`,
      );
    objects.push({
      path: `${dir}transfers/${base}-${sideName}-flat.wav`,
      bytes: Number(transfer.bytes),
      object: {
        kind: "transfer",
        id: transfer.id,
        key: transfer.objectKey,
        sha256: transfer.sha256,
        sideId: side.id,
        discId: record.disc.id,
        storedAt: new Date(transfer.createdAt),
      },
    });
    objects.push({
      path: `${dir}access/${base}-${sideName}-access.wav`,
      bytes: Number(copy.bytes),
      object: {
        kind: "render",
        id: copy.id,
        key: copy.objectKey,
        sha256: copy.sha256,
        sideId: side.id,
        discId: record.disc.id,
        storedAt: new Date(copy.finishedAt ?? 0),
      },
    });
  }
  const counts = new Map<string, number>();
  for (const l of record.labelImages) {
    const who = l.kind === "sleeve" ? "sleeve" : `${fileNameBase(l.side ?? "side")}-label`;
    const n = (counts.get(who) ?? 0) + 1;
    counts.set(who, n);
    objects.push({
      path: `${dir}labels/${base}-${who}-${n}.${labelImageExtension[l.format]}`,
      bytes: l.bytes,
      object: {
        kind: "label_image",
        id: l.id,
        key: l.objectKey,
        sha256: l.sha256,
        sideId: l.sideId,
        discId: record.disc.id,
        storedAt: new Date(l.storedAt),
      },
    });
  }
  const texts: PayloadText[] = [
    { path: `${dir}record.json`, content: Buffer.from(`${JSON.stringify(record, null, 2)}\n`) },
    { path: `${dir}premis.xml`, content: Buffer.from(premisXml(premisRecord([record]))) },
  ];
  return { objects, texts };
}

/**
 * The points files of the test-disc measurements the approved curve choices rest on, kept
 * in the database with their SHA-256 (lib/transfers/test-disc-evidence.ts): checked against
 * it here, as a stored object is, before they join the payload under evidence/.
 */
async function evidenceTexts(record: DiscRecordExport, dir: string): Promise<PayloadText[]> {
  const choiceToSide = new Map(
    Object.entries(record.approved).map(([sideId, a]) => [a.curveChoice.id, sideId] as const),
  );
  if (!choiceToSide.size) return [];
  const rows = await db
    .selectFrom("curve_choice_evidence")
    .select(["choice_id", "source_text", "source_sha256"])
    .where("choice_id", "in", [...choiceToSide.keys()])
    .where("source_text", "is not", null)
    .execute();
  const base = fileNameBase(record.disc.shelfMark);
  return rows.map((r) => {
    const side = record.disc.sides.find((s) => s.id === choiceToSide.get(r.choice_id));
    const content = Buffer.from(r.source_text ?? "", "utf8");
    if (createHash("sha256").update(content).digest("hex") !== r.source_sha256)
      throw new AppError(
        "conflict",
        409,
        `The test-disc points of ${record.disc.shelfMark} side ${side?.designation ?? "?"} no longer match their SHA-256: nothing was packaged.`,
      );
    return {
      path: `${dir}evidence/${base}-${fileNameBase(side?.designation ?? "side")}-test-disc-points.csv`,
      content,
    };
  });
}

/** The bag of one approved disc. */
export async function planDiscBag(discId: string, at = new Date()): Promise<BagPlan> {
  const record = await discRecord(discId);
  const { objects, texts } = discPayload(record, "data/");
  texts.push(...(await evidenceTexts(record, "data/")));
  return {
    scope: "disc",
    name: `${fileNameBase(record.disc.shelfMark)}-bag-${bagStamp(at)}`,
    externalIdentifier: record.disc.shelfMark,
    accession: { id: record.accession.id, identifier: record.accession.identifier },
    discs: [{ id: record.disc.id, shelfMark: record.disc.shelfMark }],
    objects,
    texts,
    at,
  };
}

/** The bag of an accession: each approved disc in its own folder of data/, with the accession's record beside them. */
export async function planAccessionBag(accessionId: string, at = new Date()): Promise<BagPlan> {
  if (!/^[0-9a-f-]{36}$/i.test(accessionId)) throw new AppError("not_found", 404, "No such accession.");
  const accession = await db
    .selectFrom("accessions")
    .select(["id", "identifier", "source", "received_on as receivedOn", "notes"])
    .where("id", "=", accessionId)
    .executeTakeFirst();
  if (!accession) throw new AppError("not_found", 404, "No such accession.");
  // Discs whose every side is approved (and which have sides at all).
  const discs = await db
    .selectFrom("discs as d")
    .select(["d.id", "d.shelf_mark as shelfMark"])
    .where("d.accession_id", "=", accessionId)
    .where((eb) =>
      eb
        .exists(eb.selectFrom("sides as s").select("s.id").whereRef("s.disc_id", "=", "d.id"))
        .and(
          eb.not(
            eb.exists(
              eb
                .selectFrom("sides as s")
                .select("s.id")
                .whereRef("s.disc_id", "=", "d.id")
                .where("s.status", "<>", "approved"),
            ),
          ),
        ),
    )
    .orderBy("d.shelf_mark")
    .execute();
  if (!discs.length)
    throw new AppError(
      "conflict",
      409,
      `Accession ${accession.identifier} has no approved disc yet: a bag holds approved discs only.`,
    );
  const objects: PayloadObject[] = [];
  const texts: PayloadText[] = [];
  const records: DiscRecordExport[] = [];
  for (const d of discs) {
    const record = await discRecord(d.id);
    records.push(record);
    const part = discPayload(record, `data/${fileNameBase(d.shelfMark)}/`);
    objects.push(...part.objects);
    texts.push(...part.texts, ...(await evidenceTexts(record, `data/${fileNameBase(d.shelfMark)}/`)));
  }
  texts.push({
    path: "data/accession.json",
    content: Buffer.from(
      `${JSON.stringify({ accession, discs: discs.map((d) => ({ id: d.id, shelfMark: d.shelfMark, folder: `data/${fileNameBase(d.shelfMark)}/` })) }, null, 2)}\n`,
    ),
  });
  texts.push({ path: "data/premis.xml", content: Buffer.from(premisXml(premisRecord(records))) });
  return {
    scope: "accession",
    name: `${fileNameBase(accession.identifier)}-bag-${bagStamp(at)}`,
    externalIdentifier: accession.identifier,
    accession: { id: accession.id, identifier: accession.identifier },
    discs,
    objects,
    texts,
    at,
  };
}

/**
 * Before any byte goes out: every payload object is in the bucket at its recorded size,
 * and none has an open fixity failure (its last check failed). Answers a plain 409 naming
 * the file; the full SHA-256 check happens as the bytes pass.
 */
export async function preflight(plan: BagPlan): Promise<void> {
  const failing = await openFixityAlerts(plan.objects.map((o) => o.object.id));
  if (failing.length) {
    const o = plan.objects.find((x) => x.object.id === failing[0].objectId)!;
    throw new AppError(
      "conflict",
      409,
      `The package cannot be made: ${o.path.replace(/^data\//, "")} failed its last fixity check (${failing[0].outcome}). ` +
        "Restore the file from a replica and check it again first.",
    );
  }
  for (const o of plan.objects) {
    try {
      const head = await fromStore(`look at ${o.object.key}`, () =>
        s3().send(new HeadObjectCommand({ Bucket: env().S3_BUCKET, Key: o.object.key })),
      );
      const size = Number(head.ContentLength ?? -1);
      if (size !== o.bytes) {
        const detail = `it has ${size} bytes, the record ${o.bytes}`;
        await recordMismatch(plan, o, null, size, detail);
        throw new AppError("conflict", 409, new PayloadMismatchError(o.object, o.path, detail).message);
      }
    } catch (err) {
      if (err instanceof AppError) throw err;
      if (isObjectMissing(err)) {
        await recordFixityResult(db, o.object, {
          outcome: "missing",
          actual: null,
          bytes: null,
          detail: "the object is not in the bucket",
          readFor: `packaging the bag ${plan.name}`,
        });
        throw new AppError(
          "conflict",
          409,
          `The package cannot be made: ${o.path.replace(/^data\//, "")} is missing from the file store. The fixity alert is raised.`,
        );
      }
      throw err;
    }
  }
}

/** Records the mismatch as a fixity result: the alert on the audit page, the curators' mail. The caller stops the bag. */
async function recordMismatch(
  plan: BagPlan,
  o: PayloadObject,
  actualSha256: string | null,
  bytes: number,
  detail: string,
): Promise<void> {
  await recordFixityResult(db, o.object, {
    outcome: "mismatch",
    actual: actualSha256,
    bytes,
    detail,
    readFor: `packaging the bag ${plan.name}`,
  }).catch((err) =>
    console.error("[rillbook] could not record the fixity mismatch found while packaging:", err),
  );
}

/** Writes the bag with the lab's bag-info.txt fields, raising the fixity alert on a mismatch, and records it. */
export async function writeBag(
  plan: BagPlan,
  sink: BagSink,
  how: { way: "download" | "delivery"; actorId: string; location?: string },
): Promise<BagResult> {
  const s = await getSettings();
  const result = await writeBagFiles(plan, sink, {
    info: [
      ["Source-Organization", env().LAB_NAME],
      ["Organization-Address", s.contactAddress],
      ["Contact-Name", s.contactName],
      ["Contact-Phone", s.contactPhone],
      ["Contact-Email", s.contactEmail],
      ["External-Description", bagDescription(plan)],
      ["Bagging-Date", baggingDate(plan.at)],
      ["External-Identifier", plan.externalIdentifier],
      ["Bag-Group-Identifier", plan.scope === "disc" ? plan.accession.identifier : undefined],
      ["Bag-Software-Agent", softwareName()],
    ],
    onMismatch: (o, actual, bytes, detail) => recordMismatch(plan, o, actual, bytes, detail),
  });
  await recordPackaging(plan, result, how);
  return result;
}

function bagDescription(plan: BagPlan): string {
  return plan.scope === "disc"
    ? `Approved disc ${plan.discs[0].shelfMark} of accession ${plan.accession.identifier}: flat transfers, access copies, label images, record and PREMIS.`
    : `Accession ${plan.accession.identifier}: its ${plan.discs.length} approved disc${plan.discs.length === 1 ? "" : "s"} (${plan.discs.map((d) => d.shelfMark).join(", ")}), each with flat transfers, access copies, label images, record and PREMIS.`;
}

/** The packaging event: one per bag, on the disc (a disc's bag) or the accession (an accession's). */
async function recordPackaging(
  plan: BagPlan,
  result: BagResult,
  how: { way: "download" | "delivery"; actorId: string; location?: string },
): Promise<void> {
  await db.transaction().execute(async (trx) => {
    await appendEvent(trx, {
      actorId: how.actorId,
      kind: plan.scope === "disc" ? "disc.packaged" : "accession.packaged",
      subjectType: plan.scope === "disc" ? "disc" : "accession",
      subjectId: plan.scope === "disc" ? plan.discs[0].id : plan.accession.id,
      discId: plan.scope === "disc" ? plan.discs[0].id : null,
      payload: {
        bag: result.name,
        way: how.way,
        ...(how.location ? { location: how.location } : {}),
        bagItVersion: "1.0",
        payloadOxum: result.payloadOxum,
        files: result.files,
        bytes: result.bytes,
        tagmanifestSha256: result.tagmanifestSha256,
        discs: plan.discs.map((d) => d.shelfMark),
      },
    });
  });
}

/** The bag as a streamed zip download; a failure on the way cuts the stream off with an error. */
export function zipBag(plan: BagPlan, actorId: string): Readable {
  const zip = zipSink(plan.name);
  writeBag(plan, zip.sink, { way: "download", actorId }).then(
    () => zip.finish(),
    (err: unknown) => {
      console.error(`[rillbook] the bag ${plan.name} was stopped:`, err instanceof Error ? err.message : err);
      zip.fail(err);
    },
  );
  return zip.stream;
}

/** Where delivered bags go: DELIVERY_S3_BUCKET (or the lab's bucket) under DELIVERY_PREFIX. */
export function deliveryTarget(): { bucket: string; prefix: string } {
  const e = env();
  return { bucket: e.DELIVERY_S3_BUCKET ?? e.S3_BUCKET, prefix: e.DELIVERY_PREFIX };
}

/**
 * Runs one delivery: the bag planned and checked when it was asked for (requestDelivery),
 * written into its folder of the delivery bucket, its state kept in bag_deliveries. While
 * it runs its lease is renewed; a server that stops mid-way leaves a stale lease, and a
 * worker's sweep closes the delivery as stopped and empties its folder
 * (lib/exports/delivery-lease.ts).
 */
export async function runDelivery(deliveryId: string, plan: BagPlan): Promise<void> {
  const d = await db
    .updateTable("bag_deliveries")
    .set({ state: "running", started_at: sql<Date>`now()`, heartbeat_at: sql<Date>`now()` })
    .where("id", "=", deliveryId)
    .where("state", "=", "queued")
    .returningAll()
    .executeTakeFirst();
  if (!d) return;
  const beat = setInterval(() => {
    db.updateTable("bag_deliveries")
      .set({ heartbeat_at: sql<Date>`now()` })
      .where("id", "=", d.id)
      .where("state", "=", "running")
      .execute()
      .catch((err: unknown) =>
        console.error(
          `[rillbook] delivery ${d.id}: could not renew its lease:`,
          err instanceof Error ? err.message : err,
        ),
      );
  }, leaseTimes().RENDER_HEARTBEAT_SECONDS * 1000);
  beat.unref();
  let sink: ReturnType<typeof bucketSink> | undefined;
  try {
    sink = bucketSink(d.bucket, d.prefix);
    const result = await writeBag(plan, sink, {
      way: "delivery",
      actorId: d.requested_by,
      location: `s3://${d.bucket}/${d.prefix}`,
    });
    const closed = await db
      .updateTable("bag_deliveries")
      .set({
        state: "done",
        payload_oxum: result.payloadOxum,
        tagmanifest_sha256: result.tagmanifestSha256,
        finished_at: sql<Date>`now()`,
      })
      .where("id", "=", d.id)
      .where("state", "=", "running")
      .executeTakeFirst();
    if (!closed.numUpdatedRows)
      console.error(`[rillbook] delivery ${d.id} was closed as stopped while it was still being written`);
  } catch (err) {
    await sink?.removeAll();
    const message = err instanceof Error ? err.message : String(err);
    console.error(`[rillbook] delivery ${d.id} failed:`, message);
    await db
      .updateTable("bag_deliveries")
      .set({ state: "failed", error: message.slice(0, 2000), finished_at: sql<Date>`now()` })
      .where("id", "=", d.id)
      .where("state", "=", "running")
      .execute();
  } finally {
    clearInterval(beat);
  }
}
