import "server-only";
import { db } from "../../db";
import { curveChoiceName } from "../curves";
import { itemText } from "../equipment/describe";
import { readDisc } from "../catalogue/records";
import { env } from "../env";
import { equipmentWithCalibrations } from "../equipment/transfer-equipment";
import { AppError } from "../http/errors";
import { storedLabelImages } from "../labels/stored";
import { parseStored, renderFilterRecordSchema, storedCurveSpecSchema } from "../validation/records";
import { measurementJson } from "../transfers/test-disc-evidence";
import { softwareName } from "../version";
import type { PremisAgent, PremisEvent, PremisFile, PremisRecord } from "./premis";

interface ReviewRow {
  sideId: string;
  decision: "approved" | "returned";
  transferId: string | null;
  transferSha256: string | null;
  curveChoiceId: string | null;
  curveSpecSha256: string | null;
  renderId: string | null;
  renderSha256: string | null;
}

/** The triple each side's latest approval binds (reviews are in decision order). */
function approvedWork(reviews: readonly ReviewRow[]) {
  const bySide: Record<
    string,
    {
      transfer: { id: string; sha256: string };
      curveChoice: { id: string; specSha256: string };
      render: { id: string; sha256: string };
    }
  > = {};
  for (const r of reviews) {
    if (r.decision !== "approved" || !r.transferId || !r.curveChoiceId || !r.renderId) continue;
    bySide[r.sideId] = {
      transfer: { id: r.transferId, sha256: r.transferSha256 ?? "" },
      curveChoice: { id: r.curveChoiceId, specSha256: r.curveSpecSha256 ?? "" },
      render: { id: r.renderId, sha256: r.renderSha256 ?? "" },
    };
  }
  return bySide;
}

/** Everything the lab knows of one disc, for the repository: record, choices, files, reviews, fixity and events. */
export async function discRecord(discId: string) {
  const disc = await readDisc(db, discId);
  if (!disc) throw new AppError("not_found", 404, "No such disc.");
  const accession = await db
    .selectFrom("accessions")
    .select(["id", "identifier", "source", "received_on as receivedOn", "notes"])
    .where("id", "=", disc.accessionId)
    .executeTakeFirstOrThrow();
  const sideIds = disc.sides.map((s) => s.id);
  const none = ["00000000-0000-0000-0000-000000000000"];
  const ids = sideIds.length ? sideIds : none;
  const [choices, transfers, renders, reviews, fixity, events] = await Promise.all([
    db
      .selectFrom("curve_choices as c")
      .innerJoin("users as u", "u.id", "c.chosen_by")
      .leftJoin("curve_choice_evidence as m", "m.choice_id", "c.id")
      .select([
        "c.id",
        "c.side_id as sideId",
        "c.preset_name as presetName",
        "c.preset_version as presetVersion",
        "c.preset_spec as presetSpec",
        "c.overrides",
        "c.spec",
        "c.cut_speed_rpm as cutSpeedRpm",
        "c.transfer_speed_rpm as transferSpeedRpm",
        "c.correct_speed as correctSpeed",
        "c.spec_sha256 as specSha256",
        "c.rationale",
        "c.evidence_kind as evidenceKind",
        "c.evidence",
        "c.chosen_at as chosenAt",
        "u.name as chosenBy",
        // The test-disc measurement a choice rests on: the points, the server's fit and the file's hash.
        measurementJson("m").as("testDiscMeasurement"),
      ])
      .where("c.side_id", "in", ids)
      .orderBy("c.chosen_at")
      .execute(),
    db
      .selectFrom("transfers as t")
      .innerJoin("users as u", "u.id", "t.uploaded_by")
      .select([
        "t.id",
        "t.side_id as sideId",
        "t.object_key as objectKey",
        "t.file_name as fileName",
        "t.sha256",
        "t.bytes",
        "t.container",
        "t.encoding",
        "t.bits_per_sample as bitsPerSample",
        "t.channels",
        "t.sample_rate_hz as sampleRateHz",
        "t.frames",
        "t.duration_seconds as durationSeconds",
        "t.bext",
        "t.stylus_size as stylusSize",
        "t.stylus_shape as stylusShape",
        "t.measured_speed_rpm as measuredSpeedRpm",
        "t.chain",
        "t.created_at as createdAt",
        "u.name as uploadedBy",
      ])
      .where("t.side_id", "in", ids)
      .orderBy("t.created_at")
      .execute(),
    db
      .selectFrom("renders as r")
      .innerJoin("users as u", "u.id", "r.requested_by")
      .select([
        "r.id",
        "r.side_id as sideId",
        "r.transfer_id as transferId",
        "r.curve_choice_id as curveChoiceId",
        "r.object_key as objectKey",
        "r.sha256",
        "r.bytes",
        "r.channel_mode as channelMode",
        "r.bit_depth as bitDepth",
        "r.trim_db as trimDb",
        "r.peak_dbfs as peakDbfs",
        "r.filter",
        "r.finished_at as finishedAt",
        "r.superseded_at as supersededAt",
        "r.superseded_reason as supersededReason",
        "u.name as requestedBy",
      ])
      .where("r.side_id", "in", ids)
      .where("r.status", "=", "done")
      .orderBy("r.finished_at")
      .execute(),
    db
      .selectFrom("reviews as r")
      .innerJoin("users as u", "u.id", "r.curator_id")
      .select([
        "r.id",
        "r.side_id as sideId",
        "r.decision",
        "r.reason",
        "r.transfer_id as transferId",
        "r.transfer_sha256 as transferSha256",
        "r.curve_choice_id as curveChoiceId",
        "r.curve_spec_sha256 as curveSpecSha256",
        "r.render_id as renderId",
        "r.render_sha256 as renderSha256",
        "r.decided_at as decidedAt",
        "u.name as curator",
      ])
      .where("r.side_id", "in", ids)
      .orderBy("r.decided_at")
      .execute(),
    db
      .selectFrom("fixity_checks")
      .select([
        "id",
        "side_id as sideId",
        "object_kind as objectKind",
        "object_key as objectKey",
        "expected_sha256 as expectedSha256",
        "actual_sha256 as actualSha256",
        "outcome",
        "checked_at as checkedAt",
      ])
      // A label image of the sleeve is checked as the disc's, with no side.
      .where((eb) => eb.or([eb("side_id", "in", ids), eb("disc_id", "=", discId)]))
      .orderBy("checked_at")
      .execute(),
    db
      .selectFrom("provenance_events as e")
      .leftJoin("users as u", "u.id", "e.actor_id")
      .select([
        "e.seq",
        "e.id",
        "e.at",
        "e.kind",
        "e.subject_type as subjectType",
        "e.subject_id as subjectId",
        "e.payload",
        "e.hash",
        "e.prev_hash as prevHash",
        "e.actor_id as actorId",
        "u.name as actorName",
      ])
      .where((eb) =>
        eb.or([
          eb("e.disc_id", "=", discId),
          eb.and([eb("e.subject_type", "=", "accession"), eb("e.subject_id", "=", disc.accessionId)]),
        ]),
      )
      .orderBy("e.seq")
      .execute(),
  ]);
  // The items each transfer was made with (the register's chain) and that chain's latest calibration then.
  const equipment = await equipmentWithCalibrations(
    db,
    transfers.map((t) => t.id),
  );
  const transfersWithEquipment = transfers.map((t) => ({ ...t, equipment: equipment.get(t.id) ?? null }));
  const labelImages = await storedLabelImages(discId);
  return {
    exportedAt: new Date().toISOString(),
    exportedBy: softwareName(),
    lab: env().LAB_NAME,
    accession,
    disc,
    curveChoices: choices.map((c) => ({
      ...c,
      cutSpeedRpm: Number(c.cutSpeedRpm),
      transferSpeedRpm: Number(c.transferSpeedRpm),
      spec: parseStored(storedCurveSpecSchema, c.spec, { table: "curve_choices", id: c.id, column: "spec" }),
    })),
    transfers: transfersWithEquipment,
    // Every access copy made, each marked superseded or not: only one made from the
    // approved transfer and curve is the side's access copy.
    accessCopies: renders.map((r) => ({
      ...r,
      filter:
        r.filter === null
          ? null
          : parseStored(renderFilterRecordSchema, r.filter, { table: "renders", id: r.id, column: "filter" }),
    })),
    reviews,
    // Per side, what its latest approval binds: the flat transfer, the curve choice and the render made from them.
    approved: approvedWork(reviews),
    fixityChecks: fixity,
    labelImages,
    events,
  };
}

export type DiscRecordExport = Awaited<ReturnType<typeof discRecord>>;

/** The measurement in one sentence of a PREMIS event's detail: what was fitted, how well, and the file's hash. */
function testDiscSentence(t: {
  pointsKind?: string;
  pointCount?: number;
  fitParameters?: string[];
  rmsDb?: number;
  worstDb?: number;
  worstHz?: number;
  sourceFileName?: string | null;
  sourceSha256?: string | null;
}): string {
  const what = t.pointsKind === "playback" ? "playback curve" : "recording characteristic";
  return (
    `Test-disc measurement: ${t.pointCount} points of the ${what}, fitted for ${(t.fitParameters ?? []).join(", ")}; ` +
    `RMS error ${Number(t.rmsDb).toFixed(3)} dB, worst ${Number(t.worstDb).toFixed(3)} dB at ${Number(t.worstHz)} Hz` +
    (t.sourceSha256 ? `; points file ${t.sourceFileName ?? "(pasted)"}, SHA-256 ${t.sourceSha256}` : "")
  );
}

/** A shelf mark or accession identifier as the start of a file name: other characters than letters, digits, ".", "_" and "-" become "_". */
export function fileNameBase(name: string): string {
  return name.replace(/[^A-Za-z0-9._-]+/g, "_");
}

function sideName(r: DiscRecordExport, sideId: string): string {
  const s = r.disc.sides.find((x) => x.id === sideId);
  return `${r.disc.shelfMark} side ${s?.designation ?? "?"}`;
}

/** Maps the lab's record onto PREMIS entities, files, events and agents. */
export function premisRecord(records: DiscRecordExport[]): PremisRecord {
  const entities: PremisRecord["entities"] = [];
  const files: PremisFile[] = [];
  const events: PremisEvent[] = [];
  const agents = new Map<string, PremisAgent>();
  const software = softwareName();
  agents.set("software", {
    id: "software",
    name: "Rillbook",
    type: "software",
    version: software.replace(/^Rillbook /, ""),
  });
  agents.set("lab", { id: "lab", name: env().LAB_NAME, type: "organization" });

  for (const r of records) {
    entities.push({
      identifier: r.disc.shelfMark,
      type: "Rillbook shelf mark",
      name: [r.disc.labelName, r.disc.catalogueNumber].filter(Boolean).join(" ") || r.disc.shelfMark,
    });
    for (const s of r.disc.sides) {
      entities.push({
        identifier: sideName(r, s.id),
        type: "Rillbook side",
        name:
          [s.title, s.matrixNumber && `matrix ${s.matrixNumber}`, s.take && `take ${s.take}`]
            .filter(Boolean)
            .join(", ") || `side ${s.designation}`,
        partOf: r.disc.shelfMark,
      });
    }
    const transferKeys = new Map(r.transfers.map((t) => [t.id, t.objectKey]));
    for (const t of r.transfers) {
      files.push({
        key: t.objectKey,
        role: "flat transfer",
        sha256: t.sha256,
        bytes: Number(t.bytes),
        originalName: t.fileName,
        formatName: t.container === "RF64" ? "RF64" : t.bext ? "Broadcast WAVE" : "WAVE",
        sideIdentifier: sideName(r, t.sideId),
      });
    }
    const renderKeys = new Map(r.accessCopies.map((a) => [a.id, a.objectKey]));
    for (const a of r.accessCopies) {
      if (!a.objectKey || !a.sha256) continue;
      files.push({
        key: a.objectKey,
        role: a.supersededAt ? "superseded access copy" : "access copy",
        sha256: a.sha256,
        bytes: Number(a.bytes),
        originalName: `${sideName(r, a.sideId).replace(/ side /, "-")}-access.wav`,
        formatName: "Broadcast WAVE",
        formatVersion: "2",
        sideIdentifier: sideName(r, a.sideId),
        derivedFrom: transferKeys.get(a.transferId),
      });
    }
    for (const l of r.labelImages) {
      files.push({
        key: l.objectKey,
        role: "label image",
        sha256: l.sha256,
        bytes: l.bytes,
        originalName: l.fileName,
        formatName: { jpeg: "JPEG", png: "PNG", tiff: "TIFF" }[l.format],
        sideIdentifier: l.sideId ? sideName(r, l.sideId) : r.disc.shelfMark,
        partOfType: l.sideId ? "Rillbook side" : "Rillbook shelf mark",
      });
    }
    for (const e of r.events) {
      if (e.actorId && !agents.has(e.actorId))
        agents.set(e.actorId, { id: e.actorId, name: e.actorName ?? "unknown person", type: "person" });
      const p = e.payload as Record<string, any>;
      const side = e.subjectType === "side" ? sideName(r, e.subjectId!) : r.disc.shelfMark;
      const agent = e.actorId
        ? { id: e.actorId, role: "implementer" }
        : { id: "software", role: "executing program" };
      const ev = (
        type: string,
        detail: string,
        objects: PremisEvent["objects"],
        outcome: PremisEvent["outcome"] = "success",
        outcomeDetail?: string,
      ): PremisEvent => ({
        id: e.id,
        type,
        at: new Date(e.at).toISOString(),
        detail,
        outcome,
        outcomeDetail,
        agent,
        objects,
      });
      const entity = [
        { type: e.subjectType === "side" ? "Rillbook side" : "Rillbook shelf mark", value: side },
      ];
      switch (e.kind) {
        case "accession.received":
          events.push(
            ev("accession", `Accession ${r.accession.identifier} received from ${r.accession.source}`, [
              { type: "Rillbook accession", value: r.accession.identifier },
            ]),
          );
          break;
        case "side.transfer_accepted": {
          // The register's items the transfer was made with are agents of the capture (PREMIS agentType "hardware").
          const used = r.transfers.find((t) => t.id === p.transferId)?.equipment ?? null;
          for (const i of used?.items ?? [])
            if (!agents.has(`equipment:${i.itemId}`))
              agents.set(`equipment:${i.itemId}`, {
                id: `equipment:${i.itemId}`,
                name: itemText(i),
                type: "hardware",
                note: `${i.kind}${i.serial ? `, serial ${i.serial}` : ""}`,
              });
          const capture = ev(
            "capture",
            `Flat (unequalized) transfer accepted after size, SHA-256 and header checks; stylus ` +
              `${p.stylusSize || "?"} ${p.stylusShape || ""}; chain: ${p.chain || "not given"}` +
              (used
                ? `; made with ${used.chain ? `the register's chain ${used.chain.name}: ` : ""}` +
                  used.items
                    .map((i) => `${i.kind} ${itemText(i)}${i.swapped ? " (swapped in)" : ""}`)
                    .join(", ")
                : ""),
            [...entity, { type: "Rillbook object key", value: p.objectKey, role: "outcome" }],
            "success",
            `SHA-256 ${p.sha256}`,
          );
          capture.otherAgents = (used?.items ?? []).map((i) => ({
            id: `equipment:${i.itemId}`,
            role: i.kind,
          }));
          events.push(capture);
          break;
        }
        case "side.rendered":
          events.push(
            ev(
              "creation",
              `Equalized access copy rendered (${p.filter?.kind ?? "filter"} of ${p.filter?.taps ?? "?"} ` +
                `taps, delay ${p.filter?.delaySamples ?? "?"} samples compensated, trim ${Number(p.trimDb ?? 0).toFixed(2)} ` +
                `dB)${speedCorrectionText(p.speedCorrection)} by ${p.filter?.software ?? software}`,
              [
                ...entity,
                {
                  type: "Rillbook object key",
                  value: transferKeys.get(p.transfer?.id) ?? String(p.transfer?.id),
                  role: "source",
                },
                { type: "Rillbook object key", value: p.accessCopy?.objectKey, role: "outcome" },
              ],
              "success",
              `SHA-256 ${p.accessCopy?.sha256}`,
            ),
          );
          break;
        case "disc.label_image_added":
          events.push(
            ev(
              "capture",
              `${p.kind === "sleeve" ? "Image of the sleeve" : `Image of the label of side ${p.side ?? "?"}`} added (${String(p.format).toUpperCase()}, ` +
                `${p.width ?? "?"} × ${p.height ?? "?"} px, “${p.fileName}”) after size, SHA-256 and type checks`,
              [...entity, { type: "Rillbook object key", value: p.objectKey, role: "outcome" }],
              "success",
              `SHA-256 ${p.sha256}`,
            ),
          );
          break;
        case "disc.label_image_withdrawn":
          // An appraisal: the image is judged not to be the disc's; its object is kept, under fixity.
          events.push(
            ev(
              "appraisal",
              `${p.kind === "sleeve" ? "Image of the sleeve" : `Image of the label of side ${p.side ?? "?"}`} “${p.fileName}” ` +
                `withdrawn from the disc's record: ${p.reason}. The file is kept in storage, under fixity checks`,
              [...entity, { type: "Rillbook label image", value: p.labelImageId, role: "source" }],
              "success",
              `SHA-256 ${p.sha256}`,
            ),
          );
          break;
        case "disc.packaged":
        case "accession.packaged":
          events.push(
            ev(
              "packing",
              `BagIt ${p.bagItVersion ?? "1.0"} package ${p.bag} made (${p.way === "delivery" ? `delivered to ${p.location}` : "downloaded as a zip"}) ` +
                `of ${Array.isArray(p.discs) ? p.discs.join(", ") : r.disc.shelfMark}; Payload-Oxum ${p.payloadOxum}`,
              [
                e.kind === "accession.packaged"
                  ? { type: "Rillbook accession", value: r.accession.identifier }
                  : { type: "Rillbook shelf mark", value: r.disc.shelfMark },
                { type: "BagIt bag", value: String(p.bag), role: "outcome" },
              ],
              "success",
              `SHA-256 of tagmanifest-sha256.txt ${p.tagmanifestSha256}`,
            ),
          );
          break;
        case "disc.fixity_checked":
        case "side.fixity_checked":
          events.push(
            ev(
              "fixity check",
              `SHA-256 recomputed from the stored ${p.object?.kind === "render" ? "access copy" : p.object?.kind === "label_image" ? "label image" : "flat transfer"}` +
                `${p.readFor ? ` while ${p.readFor}` : ""}`,
              [...entity, { type: "Rillbook object key", value: p.object?.key, role: "source" }],
              p.outcome === "pass" ? "success" : "failure",
              `${p.outcome}: expected ${p.expectedSha256}, read ${p.actualSha256 ?? "nothing"}`,
            ),
          );
          break;
        case "side.curve_chosen":
        case "side.curve_changed": {
          const choiceName = curveChoiceName({
            presetName: p.preset?.name,
            presetVersion: p.preset?.version,
            overrides: p.overrides,
            cutSpeedRpm: Number(p.cutSpeedRpm),
            transferSpeedRpm: Number(p.transferSpeedRpm),
          });
          events.push(
            ev(
              "metadata modification",
              `Playback equalization ${e.kind === "side.curve_chosen" ? "chosen" : "changed"}: ` +
                `${choiceName}; ` +
                `curve ${JSON.stringify(p.spec)}; cut at ${p.cutSpeedRpm} rpm, transferred at ${p.transferSpeedRpm} ` +
                `rpm${p.correctSpeed === true ? ", speed corrected in the render" : ""}. Rationale: ${p.rationale} (evidence: ${p.evidenceKind}${p.evidence ? `, ${p.evidence}` : ""})` +
                (p.testDisc ? `. ${testDiscSentence(p.testDisc)}` : ""),
              entity,
            ),
          );
          break;
        }
        case "side.approved": {
          // The approval names exactly what it binds: the flat transfer, the curve choice and the render made from them.
          const transferId = p.transfer?.id ?? p.transferId;
          const renderId = p.render?.id ?? p.renderId;
          const choiceId = p.curveChoice?.id ?? p.curveChoiceId;
          events.push(
            ev(
              "appraisal",
              `Approved by a curator: the access copy rendered from this flat transfer through ` +
                `curve choice ${choiceId ?? "?"}${p.curveChoice?.specSha256 ? ` (curve SHA-256 ${p.curveChoice.specSha256})` : ""}`,
              [
                ...entity,
                ...(transferId
                  ? [
                      {
                        type: "Rillbook object key",
                        value: transferKeys.get(transferId) ?? String(transferId),
                        role: "source",
                      },
                    ]
                  : []),
                ...(choiceId
                  ? [{ type: "Rillbook curve choice", value: String(choiceId), role: "source" }]
                  : []),
                ...(renderId
                  ? [
                      {
                        type: "Rillbook object key",
                        value: renderKeys.get(renderId) ?? String(renderId),
                        role: "outcome",
                      },
                    ]
                  : []),
              ],
              "success",
              [
                p.transfer?.sha256 && `flat transfer SHA-256 ${p.transfer.sha256}`,
                p.render?.sha256 && `access copy SHA-256 ${p.render.sha256}`,
              ]
                .filter(Boolean)
                .join("; ") || undefined,
            ),
          );
          break;
        }
        case "side.returned":
          events.push(ev("appraisal", `Returned to the engineer: ${p.reason}`, entity, "failure"));
          break;
        case "side.render_superseded":
          events.push(
            ev(
              "metadata modification",
              `Access copy superseded (${p.reason}); the file and its SHA-256 are kept`,
              [
                ...entity,
                {
                  type: "Rillbook object key",
                  value: renderKeys.get(p.renderId) ?? String(p.renderId),
                  role: "source",
                },
              ],
            ),
          );
          break;
        default:
          events.push(
            ev(
              "metadata modification",
              `${e.kind}${p?.before || p?.after ? `: ${JSON.stringify({ before: p.before, after: p.after })}` : ""}`,
              entity,
            ),
          );
      }
    }
  }
  return { entities, files, events, agents: [...agents.values()] };
}

/** ", speed corrected from 78 to 80 rpm (×1.025641)" for a render event that corrected the speed, else "". */
function speedCorrectionText(value: unknown): string {
  if (typeof value !== "object" || value === null) return "";
  const v = value as { cutSpeedRpm?: unknown; transferSpeedRpm?: unknown; factor?: unknown };
  if (typeof v.factor !== "number") return "";
  return `, speed corrected from ${String(v.transferSpeedRpm)} to ${String(v.cutSpeedRpm)} rpm (×${v.factor.toFixed(6)})`;
}
