/**
 * One provenance event as a sentence a person reads, with its particulars beneath.
 * Everything shown comes from the event itself (its payload as it was hashed), so
 * a curve event shows the preset values of that moment, not today's version.
 */
import { formatBytes } from "@/components/bench/progress-bar";
import { discFieldLabels, fieldText, sideChanges } from "@/components/catalogue/fields";
import { statusLabel } from "@/components/catalogue/format";
import { CORNER_WORDS, formatNumber } from "@/components/curves/plot-format";
import { CORNER_NAMES, type CornerInput, type CurveSpec, hzToUs, usToHz } from "@/lib/curves";
import { channelModeLabels, evidenceLabels } from "@/lib/validation/transfers";
import type { AuditEvent } from "./types";

type P = Record<string, any>;

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

export function cornerText(c: CornerInput | null | undefined): string {
  if (!c) return "none";
  if (c.unit === "db10k") return `${formatNumber(c.value)} dB at 10 kHz`;
  if (c.unit === "hz") return `${formatNumber(c.value)} Hz (${formatNumber(hzToUs(c.value))} µs)`;
  return `${formatNumber(c.value)} µs (${formatNumber(usToHz(c.value))} Hz)`;
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
  if (spec.reference) parts.push(`${formatNumber(spec.reference.db)} dB at ${formatNumber(spec.reference.hz)} Hz`);
  return parts.length ? parts.join("; ") : "no corners";
}

const objectWords = (kind: unknown) => (kind === "render" ? "access copy" : "flat transfer");

/** "1.4 GiB (1,503,238,553 bytes)": the exact count beside the readable size. */
function bytesText(n: unknown): string {
  const v = Number(n);
  return Number.isFinite(v) && v >= 1024 ? `${formatBytes(v)} (${v.toLocaleString("en-GB")} bytes)` : formatBytes(v);
}

export function describeEvent(e: AuditEvent): EventReading {
  const who = e.actorName ?? "The system";
  const p = (e.payload ?? {}) as P;
  const side = p.side ? `side ${p.side}` : "a side";
  const on = e.shelfMark ? ` of ${e.shelfMark}` : "";
  const d: EventDetail[] = [];
  switch (e.kind) {
    case "accession.received":
      return { sentence: `${who} recorded accession ${p.after?.identifier ?? ""} as received${p.after?.source ? ` from ${p.after.source}` : ""}.`, details: [], tone: "plain" };
    case "import.committed":
      if (p.fileName) d.push({ label: "File", value: String(p.fileName) });
      if (p.sha256) d.push({ label: "SHA-256", value: String(p.sha256), mono: true });
      return { sentence: `${who} committed a spreadsheet import${p.rows ? ` of ${p.rows} row${p.rows === 1 ? "" : "s"}` : ""}${Array.isArray(p.discs) ? `, ${p.discs.length} disc${p.discs.length === 1 ? "" : "s"}` : typeof p.discs === "number" ? `, ${p.discs} disc${p.discs === 1 ? "" : "s"}` : ""}.`, details: d, tone: "plain" };
    case "disc.created": {
      const n = Array.isArray(p.after?.sides) ? p.after.sides.length : 0;
      return { sentence: `${who} catalogued ${e.shelfMark ?? p.after?.shelfMark ?? "a disc"}${n ? ` with ${n} side${n === 1 ? "" : "s"}` : ""}.`, details: [], tone: "plain" };
    }
    case "disc.edited": {
      const changed: string[] = Array.isArray(p.changed) ? p.changed : [];
      for (const f of changed) {
        if (f === "sides") for (const s of sideChanges(p.before?.sides ?? [], p.after?.sides ?? [])) d.push({ label: "Sides", value: s });
        else d.push({ label: discFieldLabels[f] ?? f, value: `${fieldText(f, p.before?.[f])} → ${fieldText(f, p.after?.[f])}` });
      }
      return { sentence: `${who} edited ${e.shelfMark ?? "the disc"}${changed.length ? `: ${changed.map((f) => (discFieldLabels[f] ?? f).toLowerCase()).join(", ")}` : ""}.`, details: d, tone: "plain" };
    }
    case "side.assigned":
      return { sentence: `${who} assigned ${side}${on} to ${p.after?.engineerName ?? "an engineer"}.`, details: [], tone: "plain" };
    case "side.status_changed":
      if (p.note) d.push({ label: "Note", value: String(p.note) });
      if (p.reason) d.push({ label: "Reason", value: String(p.reason) });
      return { sentence: `${who} moved ${side}${on} from ${statusLabel(p.before?.status ?? "?").toLowerCase()} to ${statusLabel(p.after?.status ?? "?").toLowerCase()}.`, details: d, tone: "plain" };
    case "side.curve_chosen":
    case "side.curve_changed": {
      const preset = p.preset as { name?: string; version?: number; values?: CurveSpec } | null | undefined;
      if (preset) d.push({ label: "Preset values then", value: `${preset.name ?? "preset"} v${preset.version ?? "?"}: ${curveText(preset.values)}` });
      const overrides = (p.overrides ?? {}) as Partial<CurveSpec>;
      if (Object.keys(overrides).length) d.push({ label: preset ? "Changed for this side" : "Own values", value: curveText(overrides) });
      const cut = Number(p.cutSpeedRpm);
      const tr = Number(p.transferSpeedRpm);
      if (Number.isFinite(cut)) d.push({ label: "Speeds", value: cut === tr ? `${formatNumber(cut)} rpm` : `cut at ${formatNumber(cut)} rpm, transferred at ${formatNumber(tr)} rpm (ratio ${formatNumber(tr / cut)})` });
      if (p.rationale) d.push({ label: "Rationale", value: String(p.rationale) });
      if (p.evidenceKind) d.push({ label: "Rests on", value: `${evidenceLabels[p.evidenceKind as keyof typeof evidenceLabels] ?? p.evidenceKind}${p.evidence ? ` — ${p.evidence}` : ""}` });
      const what = preset ? `${preset.name} v${preset.version}` : "its own values";
      return { sentence: `${who} ${e.kind === "side.curve_changed" ? "changed the curve of" : "chose the curve for"} ${side}${on}: ${what}.`, details: d, tone: "plain" };
    }
    case "side.transfer_accepted": {
      const t = (p.technical ?? {}) as P;
      if (p.sha256) d.push({ label: "SHA-256", value: String(p.sha256), mono: true });
      if (p.bytes !== undefined) d.push({ label: "Size", value: bytesText(p.bytes) });
      if (t.sampleRateHz) d.push({ label: "Technical", value: `${t.container ?? ""} ${String(t.encoding ?? "").toUpperCase()} ${t.bitsPerSample ?? "?"}-bit · ${Number(t.sampleRateHz).toLocaleString("en-GB")} Hz · ${t.channels === 2 ? "stereo" : t.channels === 1 ? "mono" : `${t.channels} channels`}${t.durationSeconds ? ` · ${Number(t.durationSeconds).toFixed(1)} s` : ""}`.trim() });
      if (p.objectKey) d.push({ label: "Stored as", value: String(p.objectKey), mono: true });
      return { sentence: `${who} uploaded the flat transfer of ${side}${on}; its size, checksum and header were checked and it was accepted.`, details: d, tone: "plain" };
    }
    case "side.render_requested":
      if (p.channelMode) d.push({ label: "Channels", value: channelModeLabels[p.channelMode as keyof typeof channelModeLabels] ?? String(p.channelMode) });
      if (p.bitDepth) d.push({ label: "Word length", value: `${p.bitDepth}-bit` });
      return { sentence: `${who} asked for an access copy of ${side}${on}.`, details: d, tone: "plain" };
    case "side.rendered": {
      const f = (p.filter ?? {}) as P;
      if (p.accessCopy?.sha256) d.push({ label: "SHA-256", value: String(p.accessCopy.sha256), mono: true });
      if (p.accessCopy?.bytes !== undefined) d.push({ label: "Size", value: bytesText(p.accessCopy.bytes) });
      if (f.kind) d.push({ label: "Filter", value: `${f.kind}${f.taps ? `, ${f.taps} taps` : ""}${f.delaySamples !== undefined ? `, delay ${f.delaySamples} samples` : ""}${f.software ? ` · ${f.software}` : ""}` });
      if (p.trimDb !== undefined && p.trimDb !== null) d.push({ label: "Trim", value: `${Number(p.trimDb).toFixed(2)} dB` });
      if (p.codingHistory) d.push({ label: "Coding history", value: String(p.codingHistory), mono: true });
      return { sentence: `The worker rendered the access copy of ${side}${on}${e.actorName ? ` for ${e.actorName}` : ""}.`, details: d, tone: "plain" };
    }
    case "side.fixity_checked": {
      const ok = p.outcome === "pass";
      d.push({ label: "Expected SHA-256", value: String(p.expectedSha256 ?? "—"), mono: true });
      if (!ok) d.push({ label: "Read back", value: p.actualSha256 ? String(p.actualSha256) : "nothing", mono: true });
      if (p.detail) d.push({ label: "Detail", value: String(p.detail) });
      const outcome = ok ? "passed" : p.outcome === "mismatch" ? "found a checksum MISMATCH" : p.outcome === "missing" ? "found the file MISSING" : "could not read the file";
      return { sentence: `A fixity check of the ${objectWords(p.object?.kind)} of ${side}${on} ${outcome}.`, details: d, tone: ok ? "good" : "bad" };
    }
    case "side.approved":
      return { sentence: `${who} approved ${side}${on}.`, details: p.reason ? [{ label: "Note", value: String(p.reason) }] : [], tone: "good" };
    case "side.returned":
      return { sentence: `${who} returned ${side}${on} to the engineer.`, details: p.reason ? [{ label: "Reason", value: String(p.reason) }] : [], tone: "bad" };
    case "lab.settings_changed": {
      const names: Record<string, string> = { fixityCycleDays: "fixity cycle (days)", accessCopyRateHz: "access copy rate", accessCopyBitDepth: "access copy word length" };
      const changes = Object.keys(p.after ?? {}).map((k) => `${names[k] ?? k} from ${String(p.before?.[k] ?? "?")} to ${String(p.after?.[k])}`);
      return { sentence: `${who} changed the lab's settings: ${changes.join("; ") || "no change"}.`, details: [], tone: "plain" };
    }
    case "preset.created":
      return { sentence: `${who} added the curve preset "${p.name ?? "?"}".`, details: [{ label: "Values", value: curveText(p.after) }, ...(p.changeNote ? [{ label: "Note", value: String(p.changeNote) }] : [])], tone: "plain" };
    case "preset.versioned":
      return {
        sentence: `${who} made version ${p.version ?? "?"} of the curve preset "${p.name ?? "?"}".`,
        details: [{ label: "Before", value: curveText(p.before?.spec) }, { label: "After", value: curveText(p.after) }, ...(p.changeNote ? [{ label: "Why", value: String(p.changeNote) }] : [])],
        tone: "plain",
      };
    case "person.invited":
      return { sentence: `${who} invited ${p.email ?? "someone"}${p.role ? ` as ${p.role}` : ""}.`, details: [], tone: "plain" };
    case "person.invitation_accepted":
      return { sentence: `${p.email ?? who} accepted an invitation${p.role ? ` as ${p.role}` : ""}.`, details: [], tone: "plain" };
    case "person.role_changed":
      return { sentence: `${who} changed the role of ${p.email ?? "someone"} from ${p.from ?? "?"} to ${p.to ?? "?"}.`, details: [], tone: "plain" };
    case "person.deactivated":
    case "person.reactivated":
      return { sentence: `${who} ${e.kind === "person.deactivated" ? "deactivated" : "reactivated"} the account of ${p.email ?? "someone"}.`, details: [], tone: "plain" };
    case "person.password_reset_requested":
      return { sentence: `A password reset was asked for ${p.email ?? "an account"}.`, details: [], tone: "plain" };
    case "person.password_reset":
      return { sentence: `${p.email ?? who} set a new password.`, details: [], tone: "plain" };
    default:
      return { sentence: `${who}: ${e.kind.replace(/[._]/g, " ")}${on}.`, details: [], tone: "plain" };
  }
}

/** Kinds offered in the log's filter: prefixes first, then single kinds (the server filters by prefix). */
export const kindFilters: { value: string; label: string }[] = [
  { value: "", label: "Everything" },
  { value: "side.", label: "Sides: all work on sides" },
  { value: "side.curve_", label: "— curve chosen or changed" },
  { value: "side.transfer_accepted", label: "— flat transfer accepted" },
  { value: "side.render", label: "— access copy asked for or rendered" },
  { value: "side.fixity_checked", label: "— fixity checks" },
  { value: "side.approved", label: "— approvals" },
  { value: "side.returned", label: "— returns" },
  { value: "side.status_changed", label: "— status changes" },
  { value: "side.assigned", label: "— assignments" },
  { value: "disc.", label: "Discs: catalogued and edited" },
  { value: "accession.", label: "Accessions received" },
  { value: "import.", label: "Spreadsheet imports" },
  { value: "person.", label: "People and access" },
  { value: "preset.", label: "Curve presets" },
  { value: "lab.", label: "Lab settings" },
];
