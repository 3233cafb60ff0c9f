/**
 * One provenance event as a sentence a person reads, with its particulars beneath.
 * The audit log and the disc page's timeline both read events through here, so an
 * event reads the same wherever it is shown. Everything shown comes from the event
 * itself (its payload as it was hashed), so a curve event shows the preset values of
 * that moment, not today's version; the other events in view name what an event only
 * refers to by id (which curve a render went through, which file a review approved).
 */
import { formatBytes } from "@/components/bench/progress-bar";
import { discFieldLabels, fieldText, sideChanges } from "@/components/catalogue/fields";
import { statusLabel } from "@/components/catalogue/format";
import {
  CORNER_NAMES,
  CORNER_WORDS,
  type CornerInput,
  type CurveSpec,
  curveChoiceName,
  formatCorner,
  formatNumber,
} from "@/lib/curves";
import { channelModeLabels } from "@/lib/audio/channel-mode";
import { objectWords } from "@/lib/fixity/object-words";
import { evidenceLabels } from "@/lib/validation/transfers";
import { valueText } from "@/lib/value-text";

type P = Record<string, any>;

/** What the sentence builder needs of an event; the audit log and the disc timeline each send a little more. */
export interface EventLike {
  kind: string;
  payload: Record<string, unknown> | null;
  actorName: string | null;
  /** Given on the audit log, where events of many discs mix; the disc page leaves it out. */
  shelfMark?: string | null;
}

export interface EventDetail {
  label: string;
  value: string;
  /** Long values (checksums, keys) wrap anywhere and use the mono face. */
  mono?: boolean;
}

export interface EventReading {
  sentence: string;
  details: EventDetail[];
  tone: "plain" | "good" | "bad";
}

/** What other events in view say about the things an event names only by id. */
export interface EventContext {
  /** curve choice id → its name ("RIAA v3 + rolloff 10 dB attenuation at 10 kHz"). */
  choices: Map<string, string>;
  /** transfer id → its file name and SHA-256. */
  transfers: Map<string, { fileName: string; sha256: string }>;
  /** render id → the access copy's SHA-256, rate, word length and the choice it went through. */
  renders: Map<string, { sha256?: string; sampleRateHz?: number; bitDepth?: number; choiceId?: string }>;
  /** Turns an accession id into its identifier, where the page knows them. */
  accessionName?: (id: string) => string | undefined;
}

/** Reads the events in view once, so each sentence can name what the others recorded. */
export function eventContext(
  events: EventLike[],
  accessionName?: (id: string) => string | undefined,
): EventContext {
  const ctx: EventContext = { choices: new Map(), transfers: new Map(), renders: new Map(), accessionName };
  for (const e of events) {
    const p = (e.payload ?? {}) as P;
    if ((e.kind === "side.curve_chosen" || e.kind === "side.curve_changed") && p.choiceId)
      ctx.choices.set(String(p.choiceId), choiceNameOf(p));
    if (e.kind === "side.transfer_accepted" && p.transferId)
      ctx.transfers.set(String(p.transferId), { fileName: fileNameOf(p), sha256: String(p.sha256 ?? "") });
    if (e.kind === "side.rendered" && p.renderId)
      ctx.renders.set(String(p.renderId), {
        sha256: p.accessCopy?.sha256,
        sampleRateHz: num(p.accessCopy?.sampleRateHz),
        bitDepth: num(p.accessCopy?.bitDepth),
        choiceId: p.curveChoiceId ?? p.curveChoice?.id,
      });
  }
  return ctx;
}

const emptyContext: EventContext = { choices: new Map(), transfers: new Map(), renders: new Map() };

function num(v: unknown): number | undefined {
  const n = Number(v);
  return v === null || v === undefined || !Number.isFinite(n) ? undefined : n;
}

/** A corner as entered, with its other unit: "500 Hz (318.3 µs)", "10 dB attenuation at 10 kHz" (lib/curves formatCorner). */
export function cornerText(c: CornerInput | null | undefined): string {
  return formatCorner(c);
}

/** A curve's corners in one line: "turnover 318 µs (500.5 Hz); shelf …". */
export function curveText(spec: Partial<CurveSpec> | null | undefined): string {
  if (!spec) return "—";
  const parts: string[] = [];
  for (const n of CORNER_NAMES) {
    if (!(n in spec)) continue;
    const v = spec[n];
    parts.push(v ? `${CORNER_WORDS[n]} ${cornerText(v)}` : `no ${CORNER_WORDS[n]}`);
  }
  if (spec.reference)
    parts.push(`${formatNumber(spec.reference.db)} dB at ${formatNumber(spec.reference.hz)} Hz`);
  return parts.length ? parts.join("; ") : "no corners";
}

/** The name of the curve a choice event recorded: preset version, changes for the side, speed ratio. */
function choiceNameOf(p: P): string {
  return curveChoiceName({
    presetName: p.preset?.name,
    presetVersion: p.preset?.version,
    overrides: p.overrides,
    cutSpeedRpm: num(p.cutSpeedRpm),
    transferSpeedRpm: num(p.transferSpeedRpm),
  });
}

/** The name the engineer's file had: the last part of the object key (the server keeps it there). */
function fileNameOf(p: P): string {
  if (p.fileName) return String(p.fileName);
  const key = String(p.objectKey ?? "");
  return key.includes("/") ? key.slice(key.lastIndexOf("/") + 1) : key || "the file";
}

/** "SHA-256 3fa2b1c0…": enough of a checksum to tell two files apart in a sentence; the whole one is in the details. */
function shaShort(sha: unknown): string {
  return typeof sha === "string" && sha ? `SHA-256 ${sha.slice(0, 8)}…` : "";
}

const idOf = (v: unknown): string | undefined =>
  typeof v === "string" ? v : v && typeof v === "object" && "id" in v ? String(v.id) : undefined;

/** A status in running text; a status this page does not know yet is still readable ("needs_render" → "needs render"). */
function statusWords(status: unknown): string {
  const s = valueText(status ?? "?");
  const label = statusLabel(s);
  return (label === s ? s.replace(/_/g, " ") : label).toLowerCase();
}

/** "48 kHz, 24-bit" */
function rateText(rateHz: unknown, bitDepth: unknown): string {
  const parts: string[] = [];
  const r = num(rateHz);
  if (r) parts.push(`${formatNumber(r / 1000)} kHz`);
  const b = num(bitDepth);
  if (b) parts.push(`${b}-bit`);
  return parts.join(", ");
}

/** "1.4 GiB (1,503,238,553 bytes)": the exact count beside the readable size. */
function bytesText(n: unknown): string {
  const v = Number(n);
  return Number.isFinite(v) && v >= 1024
    ? `${formatBytes(v)} (${v.toLocaleString("en-GB")} bytes)`
    : formatBytes(v);
}

/** "1 row", "3 rows". */
function counted(n: unknown, word: string): string {
  return `${valueText(n)} ${word}${n === 1 ? "" : "s"}`;
}

/** ", 3 discs" from an import's list of discs or its count of them; "" when it names neither. */
function importedDiscs(discs: unknown): string {
  if (Array.isArray(discs)) return `, ${counted(discs.length, "disc")}`;
  return typeof discs === "number" ? `, ${counted(discs, "disc")}` : "";
}

/** "stereo", "mono", "6 channels". */
function channelsText(channels: unknown): string {
  return channels === 2 ? "stereo" : channels === 1 ? "mono" : `${valueText(channels)} channels`;
}

/** A payload value in a detail line, for kinds this page has no words for yet. */
function plainValue(v: unknown): string | null {
  if (v === null || v === undefined || v === "") return null;
  if (typeof v === "string" || typeof v === "number" || typeof v === "boolean") return String(v);
  if (typeof v === "object" && v && "status" in v && Object.keys(v).length === 1)
    return statusWords(v.status);
  return null;
}

/** Which transfer, curve and access copy a decision or a render names, each as far as the events in view tell. */
function workDetails(p: P, ctx: EventContext, d: EventDetail[]): void {
  const transferId = p.transferId ?? idOf(p.transfer);
  const choiceId = p.curveChoiceId ?? idOf(p.curveChoice);
  const renderId = p.renderId ?? idOf(p.render);
  const t = transferId ? ctx.transfers.get(String(transferId)) : undefined;
  const tSha = p.transfer?.sha256 ?? p.transferSha256 ?? t?.sha256;
  if (transferId || tSha)
    d.push({
      label: "Flat transfer",
      value: [t?.fileName, tSha ? `SHA-256 ${tSha}` : null].filter(Boolean).join(" · ") || String(transferId),
      mono: !t?.fileName,
    });
  const curve = choiceId ? ctx.choices.get(String(choiceId)) : undefined;
  if (choiceId || p.curveChoice?.name)
    d.push({ label: "Curve", value: p.curveChoice?.name ?? curve ?? "a curve choice recorded earlier" });
  const r = renderId ? ctx.renders.get(String(renderId)) : undefined;
  const rSha = p.render?.sha256 ?? p.renderSha256 ?? r?.sha256;
  if (renderId || rSha)
    d.push({
      label: "Access copy",
      value:
        [rSha ? `SHA-256 ${rSha}` : null, rateText(r?.sampleRateHz, r?.bitDepth) || null]
          .filter(Boolean)
          .join(" · ") || String(renderId),
      mono: true,
    });
}

export function describeEvent(e: EventLike, ctx: EventContext = emptyContext): EventReading {
  const who = e.actorName ?? "The system";
  const p = (e.payload ?? {}) as P;
  const side = p.side ? `side ${p.side}` : "a side";
  const on = e.shelfMark ? ` of ${e.shelfMark}` : "";
  const d: EventDetail[] = [];
  switch (e.kind) {
    case "accession.received":
      return {
        sentence: `${who} recorded accession ${p.after?.identifier ?? ""} as received${p.after?.source ? ` from ${p.after.source}` : ""}.`,
        details: [],
        tone: "plain",
      };
    case "accession.edited": {
      const changed: string[] = Array.isArray(p.changed) ? p.changed : [];
      for (const f of changed)
        d.push({
          label: accessionFieldLabels[f] ?? f,
          value: `${p.before?.[f] || "(blank)"} → ${p.after?.[f] || "(blank)"}`,
        });
      const name = p.identifier ?? p.after?.identifier ?? "";
      return {
        sentence: `${who} corrected accession ${name}: ${changed.map((f) => (accessionFieldLabels[f] ?? f).toLowerCase()).join(", ")}.`,
        details: d,
        tone: "plain",
      };
    }
    case "import.committed":
      if (p.fileName) d.push({ label: "File", value: String(p.fileName) });
      if (p.sha256) d.push({ label: "SHA-256", value: String(p.sha256), mono: true });
      return {
        sentence: `${who} committed a spreadsheet import${p.rows ? ` of ${counted(p.rows, "row")}` : ""}${importedDiscs(p.discs)}.`,
        details: d,
        tone: "plain",
      };
    case "disc.created": {
      const n = Array.isArray(p.after?.sides) ? p.after.sides.length : 0;
      const how = Object.keys(p).some((k) => /import/i.test(k)) ? " from a spreadsheet import" : "";
      return {
        sentence: `${who} catalogued ${e.shelfMark ?? "the disc"}${how}${n ? ` with ${n} side${n === 1 ? "" : "s"}` : ""}.`,
        details: [],
        tone: "plain",
      };
    }
    case "disc.edited": {
      const changed: string[] = Array.isArray(p.changed) ? p.changed : [];
      for (const f of changed) {
        if (f === "sides")
          for (const s of sideChanges(p.before?.sides ?? [], p.after?.sides ?? []))
            d.push({ label: "Sides", value: s });
        else
          d.push({
            label: discFieldLabels[f] ?? f,
            value: `${fieldText(f, p.before?.[f], ctx.accessionName)} → ${fieldText(f, p.after?.[f], ctx.accessionName)}`,
          });
      }
      if (!changed.length)
        return {
          sentence: `${who} saved ${e.shelfMark ?? "the disc"} without changes.`,
          details: [],
          tone: "plain",
        };
      return {
        sentence: `${who} edited ${e.shelfMark ?? "the disc"}: ${changed.map((f) => (discFieldLabels[f] ?? f).toLowerCase()).join(", ")}.`,
        details: d,
        tone: "plain",
      };
    }
    case "side.assigned": {
      const was =
        p.before?.status && p.before.status !== "catalogued"
          ? ` (it was ${statusWords(p.before.status)})`
          : "";
      return {
        sentence: `${who} assigned ${side}${on} to ${p.after?.engineerName ?? "an engineer"}${was}.`,
        details: [],
        tone: "plain",
      };
    }
    case "side.status_changed": {
      const why = p.note ?? p.reason;
      return {
        sentence:
          `${who === "The system" ? "Rillbook" : who} moved ${side}${on} from ${statusWords(p.before?.status)} ` +
          `to ${statusWords(p.after?.status)}${why ? `: ${String(why).replace(/\.$/, "")}` : ""}.`,
        details: [],
        tone: "plain",
      };
    }
    case "side.curve_chosen":
    case "side.curve_changed": {
      const preset = p.preset as { name?: string; version?: number; values?: CurveSpec } | null | undefined;
      if (preset)
        d.push({
          label: "Preset values then",
          value: `${preset.name ?? "preset"} v${preset.version ?? "?"}: ${curveText(preset.values)}`,
        });
      const overrides = (p.overrides ?? {}) as Partial<CurveSpec>;
      if (Object.keys(overrides).length)
        d.push({ label: preset ? "Changed for this side" : "Own values", value: curveText(overrides) });
      const cut = Number(p.cutSpeedRpm);
      const tr = Number(p.transferSpeedRpm);
      if (Number.isFinite(cut))
        d.push({
          label: "Speeds",
          value:
            cut === tr
              ? `${formatNumber(cut)} rpm`
              : `cut at ${formatNumber(cut)} rpm, transferred at ${formatNumber(tr)} rpm (ratio ${formatNumber(tr / cut)})` +
                (p.correctSpeed === true ? "; speed corrected in the render" : ""),
        });
      if (p.rationale) d.push({ label: "Rationale", value: String(p.rationale) });
      if (p.evidenceKind)
        d.push({
          label: "Rests on",
          value: `${evidenceLabels[p.evidenceKind as keyof typeof evidenceLabels] ?? p.evidenceKind}${p.evidence ? ` — ${p.evidence}` : ""}`,
        });
      return {
        sentence: `${who} ${e.kind === "side.curve_changed" ? "changed the curve of" : "chose the curve for"} ${side}${on}: ${choiceNameOf(p)}.`,
        details: d,
        tone: "plain",
      };
    }
    case "side.transfer_accepted": {
      const t = (p.technical ?? {}) as P;
      if (p.sha256) d.push({ label: "SHA-256", value: String(p.sha256), mono: true });
      if (Array.isArray(p.sameFileAs) && p.sameFileAs.length)
        d.push({
          label: "Same file as",
          value: `${p.sameFileAs.map((t: P) => `${t.shelfMark} side ${t.side}`).join(", ")} (accepted after the engineer confirmed)`,
        });
      if (p.bytes !== undefined) d.push({ label: "Size", value: bytesText(p.bytes) });
      if (t.sampleRateHz)
        d.push({
          label: "Technical",
          value: (
            `${t.container ?? ""} ${String(t.encoding ?? "").toUpperCase()} ${t.bitsPerSample ?? "?"}-bit ` +
            `· ${Number(t.sampleRateHz).toLocaleString("en-GB")} Hz · ${channelsText(t.channels)}` +
            `${t.durationSeconds ? ` · ${Number(t.durationSeconds).toFixed(1)} s` : ""}`
          ).trim(),
        });
      if (p.objectKey) d.push({ label: "Stored as", value: String(p.objectKey), mono: true });
      if (Array.isArray(p.equipment?.items) && p.equipment.items.length)
        d.push({
          label: "Made with",
          value:
            (p.equipment.chain?.name ? `${p.equipment.chain.name}: ` : "") +
            p.equipment.items
              .map(
                (i: P) =>
                  `${i.kind} ${[i.make, i.model].filter(Boolean).join(" ")}${i.swapped ? " (swapped in)" : ""}`,
              )
              .join(", "),
        });
      const sha = shaShort(p.sha256);
      return {
        sentence:
          `${who} uploaded the flat transfer ${fileNameOf(p)} of ${side}${on}${sha ? ` (${sha})` : ""}; ` +
          `its size, checksum and header were checked and it was accepted.`,
        details: d,
        tone: "plain",
      };
    }
    case "side.render_requested": {
      if (p.channelMode)
        d.push({
          label: "Channels",
          value: channelModeLabels[p.channelMode as keyof typeof channelModeLabels] ?? String(p.channelMode),
        });
      workDetails({ transferId: p.transferId, curveChoiceId: p.curveChoiceId }, ctx, d);
      const curve = p.curveChoiceId ? ctx.choices.get(String(p.curveChoiceId)) : undefined;
      const rate = rateText(p.sampleRateHz, p.bitDepth);
      return {
        sentence: `${who} asked for an access copy of ${side}${on}${curve ? ` through ${curve}` : ""}${rate ? `, at ${rate}` : ""}.`,
        details: d,
        tone: "plain",
      };
    }
    case "side.render_cancelled": {
      if (p.progress !== undefined)
        d.push({ label: "Progress then", value: `${Math.round(Number(p.progress) * 100)} %` });
      return {
        sentence: `${who} cancelled the render of ${side}${on}${p.stalled ? ": its worker had stopped" : ""}.`,
        details: d,
        tone: "plain",
      };
    }
    case "side.rendered": {
      const f = (p.filter ?? {}) as P;
      const choiceId = p.curveChoiceId ?? idOf(p.curveChoice);
      const curve = choiceId ? ctx.choices.get(String(choiceId)) : undefined;
      const transferId = idOf(p.transfer) ?? p.transferId;
      const source = transferId ? ctx.transfers.get(String(transferId))?.fileName : undefined;
      const rate = rateText(p.accessCopy?.sampleRateHz, p.accessCopy?.bitDepth);
      if (p.accessCopy?.sha256) d.push({ label: "SHA-256", value: String(p.accessCopy.sha256), mono: true });
      if (p.accessCopy?.bytes !== undefined) d.push({ label: "Size", value: bytesText(p.accessCopy.bytes) });
      if (!curve && f.spec) d.push({ label: "Curve", value: curveText(f.spec) });
      if (p.transfer?.sha256)
        d.push({
          label: "From flat transfer",
          value: `${source ? `${source} · ` : ""}SHA-256 ${p.transfer.sha256}`,
          mono: !source,
        });
      if (f.kind)
        d.push({
          label: "Filter",
          value:
            `${f.kind === "fir" ? "FIR" : f.kind}${f.taps ? `, ${f.taps} taps` : ""}` +
            `${f.delaySamples !== undefined ? `, delay ${f.delaySamples} samples` : ""}` +
            `${f.software ? ` · ${f.software}` : ""}`,
        });
      if (p.trimDb !== undefined && p.trimDb !== null)
        d.push({ label: "Trim", value: `${Number(p.trimDb).toFixed(2)} dB` });
      if (p.speedCorrection && typeof p.speedCorrection.factor === "number")
        d.push({
          label: "Speed corrected",
          value:
            `from ${formatNumber(Number(p.speedCorrection.transferSpeedRpm))} to ` +
            `${formatNumber(Number(p.speedCorrection.cutSpeedRpm))} rpm (×${Number(p.speedCorrection.factor).toFixed(6)})`,
        });
      if (p.codingHistory) d.push({ label: "Coding history", value: String(p.codingHistory), mono: true });
      const sha = shaShort(p.accessCopy?.sha256);
      return {
        sentence:
          `The worker rendered the access copy of ${side}${on}${e.actorName ? ` for ${e.actorName}` : ""}` +
          `${source ? ` from ${source}` : ""}${curve ? ` through ${curve}` : ""}${rate ? `, at ${rate}` : ""}` +
          `${sha ? ` (${sha})` : ""}.`,
        details: d,
        tone: "plain",
      };
    }
    case "side.render_superseded": {
      const r = p.renderId ? ctx.renders.get(String(p.renderId)) : undefined;
      const curve = r?.choiceId ? ctx.choices.get(r.choiceId) : undefined;
      if (r?.sha256) d.push({ label: "Access copy", value: `SHA-256 ${r.sha256}`, mono: true });
      if (curve) d.push({ label: "Curve", value: curve });
      d.push({
        label: "Kept",
        value: "The file and its checksum stay in the history; it is no longer the side's access copy.",
      });
      const sha = shaShort(r?.sha256);
      return {
        sentence: `The access copy of ${side}${on}${sha ? ` (${sha})` : ""} was superseded${p.reason ? `: ${String(p.reason).replace(/\.$/, "")}` : ""}.`,
        details: d,
        tone: "plain",
      };
    }
    case "disc.label_image_added": {
      if (p.fileName) d.push({ label: "File", value: String(p.fileName) });
      if (p.format)
        d.push({
          label: "Image",
          value: `${String(p.format).toUpperCase()}${p.width && p.height ? `, ${p.width} × ${p.height} px` : ""}`,
        });
      if (p.sha256) d.push({ label: "SHA-256", value: String(p.sha256), mono: true });
      const what = p.kind === "sleeve" ? "the sleeve" : `the label of ${side}`;
      return { sentence: `${who} added an image of ${what}${on}.`, details: d, tone: "plain" };
    }
    case "disc.label_image_withdrawn": {
      if (p.fileName) d.push({ label: "File", value: String(p.fileName) });
      if (p.sha256) d.push({ label: "SHA-256", value: String(p.sha256), mono: true });
      if (p.reason) d.push({ label: "Reason", value: String(p.reason) });
      const what = p.kind === "sleeve" ? "the sleeve" : `the label of ${side}`;
      return { sentence: `${who} withdrew an image of ${what}${on}.`, details: d, tone: "plain" };
    }
    case "disc.packaged":
    case "accession.packaged": {
      if (p.bag) d.push({ label: "Bag", value: String(p.bag), mono: true });
      if (p.location) d.push({ label: "Delivered to", value: String(p.location), mono: true });
      if (p.payloadOxum) d.push({ label: "Payload-Oxum", value: String(p.payloadOxum), mono: true });
      if (p.tagmanifestSha256)
        d.push({ label: "Tagmanifest SHA-256", value: String(p.tagmanifestSha256), mono: true });
      const what =
        e.kind === "accession.packaged"
          ? `the accession's approved disc${Array.isArray(p.discs) && p.discs.length === 1 ? "" : "s"}${Array.isArray(p.discs) ? ` (${p.discs.join(", ")})` : ""}`
          : (e.shelfMark ?? "the disc");
      return {
        sentence: `${who} packaged ${what} as a BagIt bag${p.way === "delivery" ? ", written to the delivery bucket" : ", downloaded as a zip"}.`,
        details: d,
        tone: "good",
      };
    }
    case "disc.fixity_checked":
    case "side.fixity_checked": {
      const ok = p.outcome === "pass";
      d.push({ label: "Expected SHA-256", value: String(p.expectedSha256 ?? "—"), mono: true });
      if (!ok)
        d.push({
          label: "Read back",
          value: p.actualSha256 ? String(p.actualSha256) : "nothing",
          mono: true,
        });
      if (p.object?.key) d.push({ label: "Object", value: String(p.object.key), mono: true });
      if (p.detail) d.push({ label: "Detail", value: String(p.detail) });
      const outcome = ok
        ? "passed"
        : p.outcome === "mismatch"
          ? "found a checksum MISMATCH"
          : p.outcome === "missing"
            ? "found the file MISSING"
            : "could not read the file";
      // An access copy's and a label image's keys end in names the server gave ("original.png"),
      // not the file's: the sentence names them by what they are; the key is in the details.
      const file =
        p.object?.kind === "render" || p.object?.kind === "label_image"
          ? ""
          : p.object?.key
            ? ` ${fileNameOf({ objectKey: p.object.key })}`
            : "";
      const sha = shaShort(p.expectedSha256);
      return {
        sentence: `A fixity check of the ${objectWords(p.object?.kind)}${file} of ${p.side ? side : "the disc"}${on}${sha ? ` (${sha})` : ""} ${outcome}${p.readFor ? ` while ${String(p.readFor)}` : ""}.`,
        details: d,
        tone: ok ? "good" : "bad",
      };
    }
    case "side.approved":
      workDetails(p, ctx, d);
      if (p.reason) d.push({ label: "Note", value: String(p.reason) });
      return {
        sentence: `${who} approved ${side}${on}: its flat transfer, curve and access copy are accepted together.`,
        details: d,
        tone: "good",
      };
    case "side.returned":
      workDetails(p, ctx, d);
      // The reason as written, in quotes; its own full stop ends the sentence.
      const reason = p.reason ? String(p.reason).trim() : "";
      return {
        sentence: `${who} returned ${side}${on} to the engineer${reason ? `: “${reason}”${/[.!?]$/.test(reason) ? "" : "."}` : "."}`,
        details: d,
        tone: "bad",
      };
    case "lab.settings_changed": {
      const names: Record<string, string> = {
        fixityCycleDays: "fixity cycle (days)",
        accessCopyRateHz: "access copy rate",
        accessCopyBitDepth: "access copy word length",
      };
      const changes = Object.keys(p.after ?? {}).map(
        (k) => `${names[k] ?? k} from ${String(p.before?.[k] ?? "?")} to ${String(p.after?.[k])}`,
      );
      return {
        sentence: `${who} changed the lab's settings: ${changes.join("; ") || "no change"}.`,
        details: [],
        tone: "plain",
      };
    }
    case "preset.created":
      return {
        sentence: `${who} added the curve preset "${p.name ?? "?"}".`,
        details: [
          { label: "Values", value: curveText(p.after) },
          ...(p.changeNote ? [{ label: "Note", value: String(p.changeNote) }] : []),
        ],
        tone: "plain",
      };
    case "preset.versioned":
      return {
        sentence: `${who} made version ${p.version ?? "?"} of the curve preset "${p.name ?? "?"}".`,
        details: [
          { label: "Before", value: curveText(p.before?.spec) },
          { label: "After", value: curveText(p.after) },
          ...(p.changeNote ? [{ label: "Why", value: String(p.changeNote) }] : []),
          ...(Array.isArray(p.corrects) && p.corrects.length
            ? [
                {
                  label: "Corrects",
                  value: `version${p.corrects.length > 1 ? "s" : ""} ${p.corrects.join(", ")}: ${String(p.correctionNote ?? "")}`,
                },
              ]
            : []),
        ],
        tone: "plain",
      };
    case "campaign.started":
      return {
        sentence:
          `${who} started the re-render campaign "${p.title ?? "?"}" over ${p.sides ?? "?"} side${p.sides === 1 ? "" : "s"}: ` +
          `${p.preset?.name ?? "a preset"} version ${p.correctingVersion ?? "?"} in place of ` +
          `${Array.isArray(p.fromVersions) ? p.fromVersions.map((v: number) => `v${v}`).join(", ") : "earlier versions"}.`,
        details: p.correctionNote ? [{ label: "Correction", value: String(p.correctionNote) }] : [],
        tone: "plain",
      };
    case "campaign.cancelled":
      return {
        sentence:
          `${who} cancelled the re-render campaign "${p.title ?? "?"}": ${p.cancelledSides ?? 0} render(s) not yet started were cancelled` +
          `${p.stillRendering ? `, ${p.stillRendering} under way finish` : ""}.`,
        details: [],
        tone: "plain",
      };
    case "campaign.retried":
      return {
        sentence: `${who} retried the failed sides of the re-render campaign "${p.title ?? "?"}".`,
        details: [],
        tone: "plain",
      };
    case "campaign.finished":
      return {
        sentence:
          `The re-render campaign "${p.title ?? "?"}" finished${p.cancelled ? " (cancelled)" : ""}: ` +
          `${p.counts?.done ?? 0} done, ${p.counts?.failed ?? 0} failed, ${p.counts?.cancelled ?? 0} cancelled.`,
        details: [],
        tone: p.counts?.failed ? "bad" : "good",
      };
    case "equipment.item_registered":
      return {
        sentence:
          `${who} registered ${p.after?.kind ?? "an item"} ${p.item ?? ""} in the equipment register.`.replace(
            / +\.$/,
            ".",
          ),
        details: p.after?.serial ? [{ label: "Serial", value: String(p.after.serial), mono: true }] : [],
        tone: "plain",
      };
    case "equipment.item_edited":
      return {
        sentence: `${who} corrected the register's ${p.kind ?? "item"} ${p.item ?? ""}: ${Object.keys(
          p.after ?? {},
        )
          .map((k) => `${k} from ${plainValue(p.before?.[k]) ?? "—"} to ${plainValue(p.after?.[k]) ?? "—"}`)
          .join("; ")}.`,
        details: [],
        tone: "plain",
      };
    case "equipment.chain_saved":
      return {
        sentence: `${who} saved the chain "${p.name ?? "?"}".`,
        details: [
          {
            label: "Items",
            value: Array.isArray(p.items) ? p.items.map((i: P) => `${i.kind} ${i.name}`).join(", ") : "—",
          },
        ],
        tone: "plain",
      };
    case "equipment.chain_edited":
      return {
        sentence: `${who} changed the chain "${p.name ?? "?"}"${p.after?.retired === true ? " (retired it)" : p.after?.retired === false ? " (brought it back into use)" : ""}.`,
        details: Array.isArray(p.after?.items)
          ? [{ label: "Items now", value: p.after.items.map((i: P) => `${i.kind} ${i.name}`).join(", ") }]
          : [],
        tone: "plain",
      };
    case "equipment.chain_calibrated":
      return {
        sentence: `${who} calibrated the chain "${p.chain ?? "?"}" with ${p.testDisc ?? "a test disc"} on ${p.calibratedOn ?? "?"}.`,
        details: [
          { label: "Expected curve", value: String(p.expected ?? "?") },
          {
            label: "Deviation",
            value: `${Number(p.deviationRmsDb).toFixed(2)} dB RMS, worst ${Number(p.deviationWorstDb).toFixed(2)} dB at ${Math.round(Number(p.deviationWorstHz))} Hz (${p.points ?? "?"} points)`,
          },
        ],
        tone: "plain",
      };
    case "equipment.finding_recorded":
      return {
        sentence:
          p.outcome === "fault"
            ? `${who} recorded a fault in ${p.item ?? "an item"}, found ${p.foundOn ?? "?"}: ${p.description ?? ""}`
            : `${who} inspected ${p.item ?? "an item"} on ${p.foundOn ?? "?"} and found it sound.`,
        details: p.window
          ? [
              {
                label: "Transfers in doubt",
                value: `${p.transfersInDoubt ?? 0}, made ${p.window.from ? `from ${p.window.from}` : "since its first use"} to ${p.window.to}`,
              },
            ]
          : [],
        tone: p.outcome === "fault" ? "bad" : "good",
      };
    case "person.invited":
      return {
        sentence: `${who} invited ${p.email ?? "someone"}${p.role ? ` as ${p.role}` : ""}.`,
        details: [],
        tone: "plain",
      };
    case "person.invitation_accepted":
      return {
        sentence: `${p.email ?? who} accepted an invitation${p.role ? ` as ${p.role}` : ""}.`,
        details: [],
        tone: "plain",
      };
    case "person.role_changed":
      return {
        sentence: `${who} changed the role of ${p.email ?? "someone"} from ${p.from ?? "?"} to ${p.to ?? "?"}.`,
        details: [],
        tone: "plain",
      };
    case "person.deactivated":
    case "person.reactivated":
      return {
        sentence: `${who} ${e.kind === "person.deactivated" ? "deactivated" : "reactivated"} the account of ${p.email ?? "someone"}.`,
        details: [],
        tone: "plain",
      };
    case "person.password_reset_requested":
      return {
        sentence: `A password reset was asked for ${p.email ?? "an account"}.`,
        details: [],
        tone: "plain",
      };
    case "person.password_reset":
      return { sentence: `${p.email ?? who} set a new password.`, details: [], tone: "plain" };
    default: {
      // A kind without its own words yet: say what it is and who did it to which side, and show its plain fields.
      const what = kindLabel(e.kind).toLowerCase();
      for (const [k, v] of Object.entries(p)) {
        if (k === "side") continue;
        if ((k === "before" || k === "after") && v && typeof v === "object") continue;
        const text = plainValue(v);
        if (text !== null && d.length < 8)
          d.push({
            label: k
              .replace(/([A-Z])/g, " $1")
              .replace(/_/g, " ")
              .toLowerCase()
              .replace(/^./, (c) => c.toUpperCase()),
            value: text,
            mono: /Id$|sha|key/i.test(k),
          });
      }
      if (p.before?.status || p.after?.status)
        d.unshift({
          label: "Status",
          value: `${statusWords(p.before?.status)} → ${statusWords(p.after?.status)}`,
        });
      return {
        sentence: `${who} recorded: ${what}${p.side ? ` (${side}${on})` : on ? ` (${e.shelfMark})` : ""}.`,
        details: d,
        tone: "plain",
      };
    }
  }
}

const accessionFieldLabels: Record<string, string> = {
  identifier: "Identifier",
  source: "Source",
  receivedOn: "Received on",
  notes: "Notes",
};

const KIND_LABELS: Record<string, string> = {
  "accession.received": "Accession received",
  "accession.edited": "Accession corrected",
  "import.committed": "Spreadsheet import",
  "disc.created": "Catalogued",
  "disc.edited": "Disc edited",
  "side.assigned": "Assigned",
  "side.status_changed": "Status changed",
  "side.curve_chosen": "Curve chosen",
  "side.curve_changed": "Curve changed",
  "side.transfer_accepted": "Flat transfer accepted",
  "side.render_requested": "Access copy asked for",
  "side.rendered": "Access copy rendered",
  "side.render_cancelled": "Render cancelled",
  "side.render_superseded": "Access copy superseded",
  "side.fixity_checked": "Fixity check",
  "disc.fixity_checked": "Fixity check",
  "disc.label_image_added": "Label image added",
  "disc.label_image_withdrawn": "Label image withdrawn",
  "disc.packaged": "Packaged (BagIt)",
  "accession.packaged": "Accession packaged (BagIt)",
  "side.approved": "Approved",
  "side.returned": "Returned",
  "lab.settings_changed": "Lab settings changed",
  "preset.created": "Curve preset added",
  "preset.versioned": "Curve preset versioned",
  "campaign.started": "Re-render campaign started",
  "campaign.cancelled": "Re-render campaign cancelled",
  "campaign.retried": "Re-render campaign retried",
  "campaign.finished": "Re-render campaign finished",
};

/** A kind in a few words for filters and the fallback sentence: "side.render_superseded" → "Access copy superseded". */
export function kindLabel(kind: string): string {
  if (KIND_LABELS[kind]) return KIND_LABELS[kind];
  const words = kind.replace(/^[a-z]+\./, "").replace(/[._]/g, " ");
  return words.charAt(0).toUpperCase() + words.slice(1);
}

/** Kinds offered in the log's filter: prefixes first, then single kinds (the server filters by prefix). */
export const kindFilters: { value: string; label: string }[] = [
  { value: "", label: "Everything" },
  { value: "side.", label: "Sides: all work on sides" },
  { value: "side.curve_", label: "— curve chosen or changed" },
  { value: "side.transfer_accepted", label: "— flat transfer accepted" },
  { value: "side.render", label: "— access copy asked for, rendered or superseded" },
  { value: "side.fixity_checked", label: "— fixity checks" },
  { value: "side.approved", label: "— approvals" },
  { value: "side.returned", label: "— returns" },
  { value: "side.status_changed", label: "— status changes" },
  { value: "side.assigned", label: "— assignments" },
  { value: "disc.", label: "Discs: catalogued, edited, label images, packages" },
  { value: "accession.", label: "Accessions received and corrected" },
  { value: "import.", label: "Spreadsheet imports" },
  { value: "person.", label: "People and access" },
  { value: "preset.", label: "Curve presets" },
  { value: "campaign.", label: "Re-render campaigns" },
  { value: "lab.", label: "Lab settings" },
];
