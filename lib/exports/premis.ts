// The disc's record as PREMIS 3.0 XML (Library of Congress, namespace
// http://www.loc.gov/premis/v3): the disc and its sides as intellectual entities, every
// stored file with its SHA-256, and the events of the record with type (from the
// PREMIS event-type vocabulary), date-time, detail, outcome, agents and objects.
import { create } from "xmlbuilder2";

const PREMIS_NS = "http://www.loc.gov/premis/v3";
const XSI_NS = "http://www.w3.org/2001/XMLSchema-instance";
const EVENT_TYPE_AUTHORITY = "http://id.loc.gov/vocabulary/preservation/eventType";

export interface PremisFile {
  /** The object key in the bucket: the file's identifier. */
  key: string;
  role: "flat transfer" | "access copy" | "superseded access copy" | "label image";
  sha256: string;
  bytes: number;
  originalName: string;
  /** Broadcast WAVE or RF64, with a version where known. */
  formatName: string;
  formatVersion?: string;
  sideIdentifier: string;
  /** What sideIdentifier names: a side (the default), or the disc for a sleeve's image. */
  partOfType?: "Rillbook side" | "Rillbook shelf mark";
  /** For an access copy: the key of the flat transfer it was made from. */
  derivedFrom?: string;
}

export interface PremisEvent {
  id: string;
  /** A term of the PREMIS event-type vocabulary, e.g. "capture", "fixity check". */
  type: string;
  at: string;
  detail: string;
  outcome: "success" | "failure";
  outcomeDetail?: string;
  agent: { id: string; role: string } | null;
  /** Further agents of the event: the equipment a capture was made with, each in its role ("stylus"). */
  otherAgents?: { id: string; role: string }[];
  objects: { type: string; value: string; role?: string }[];
}

export interface PremisAgent {
  id: string;
  name: string;
  type: "person" | "software" | "organization" | "hardware";
  version?: string;
  note?: string;
}

export interface PremisRecord {
  entities: { identifier: string; type: string; name: string; partOf?: string }[];
  files: PremisFile[];
  events: PremisEvent[];
  agents: PremisAgent[];
}

/** Terms of the Library of Congress preservation event-type vocabulary (id.loc.gov), by their URI slug. */
const EVENT_TYPE_SLUGS: Record<string, string> = {
  accession: "acc",
  capture: "cap",
  creation: "cre",
  "fixity check": "fix",
  "message digest calculation": "mes",
  "metadata modification": "mem",
  "metadata extraction": "mee",
  validation: "val",
  appraisal: "app",
  "policy assignment": "poa",
  ingestion: "ing",
  packing: "pac",
  transfer: "tra",
};

function eventTypeUri(type: string): string | undefined {
  const slug = EVENT_TYPE_SLUGS[type];
  return slug ? `${EVENT_TYPE_AUTHORITY}/${slug}` : undefined;
}

/**
 * Text as XML 1.0 can carry it. XML 1.0 allows only tab, line feed, carriage return and
 * U+0020–U+D7FF, U+E000–U+FFFD, U+10000–U+10FFFF (XML 1.0 §2.2, production [2] Char);
 * a stored title may hold others (a vertical tab pasted from a word processor, half of a
 * surrogate pair). Each is written as U+FFFD, the Unicode replacement character, so the
 * export stays well-formed and still shows that something was there.
 */
export function xmlText(text: string): string {
  return text.replace(/[^\t\n\r\u0020-\uD7FF\uE000-\uFFFD\u{10000}-\u{10FFFF}]/gu, "\uFFFD");
}

export function premisXml(record: PremisRecord): string {
  const root = create({ version: "1.0", encoding: "UTF-8" }).ele(PREMIS_NS, "premis:premis", {
    "xmlns:xsi": XSI_NS,
    "xsi:schemaLocation": `${PREMIS_NS} http://www.loc.gov/standards/premis/v3/premis.xsd`,
    version: "3.0",
  });
  const p = (
    parent: ReturnType<typeof root.ele>,
    name: string,
    text?: string,
    attrs?: Record<string, string>,
  ) => {
    const safeAttrs = attrs
      ? Object.fromEntries(Object.entries(attrs).map(([k, v]) => [k, xmlText(v)]))
      : undefined;
    const el = parent.ele(PREMIS_NS, `premis:${name}`, safeAttrs);
    if (text !== undefined) el.txt(xmlText(text));
    return el;
  };

  for (const e of record.entities) {
    const o = p(root, "object", undefined, { "xsi:type": "premis:intellectualEntity" });
    const id = p(o, "objectIdentifier");
    p(id, "objectIdentifierType", e.type);
    p(id, "objectIdentifierValue", e.identifier);
    p(o, "originalName", e.name);
    if (e.partOf) {
      const rel = p(o, "relationship");
      p(rel, "relationshipType", "structural", { authority: "relationshipType" });
      p(rel, "relationshipSubType", "is part of", { authority: "relationshipSubType" });
      const r = p(rel, "relatedObjectIdentifier");
      p(r, "relatedObjectIdentifierType", "Rillbook shelf mark");
      p(r, "relatedObjectIdentifierValue", e.partOf);
    }
  }

  for (const f of record.files) {
    const o = p(root, "object", undefined, { "xsi:type": "premis:file" });
    const id = p(o, "objectIdentifier");
    p(id, "objectIdentifierType", "Rillbook object key");
    p(id, "objectIdentifierValue", f.key);
    const ch = p(o, "objectCharacteristics");
    p(ch, "compositionLevel", "0");
    const fx = p(ch, "fixity");
    p(fx, "messageDigestAlgorithm", "SHA-256", { authority: "cryptographicHashFunctions" });
    p(fx, "messageDigest", f.sha256);
    p(fx, "messageDigestOriginator", "Rillbook");
    p(ch, "size", String(f.bytes));
    const fmt = p(ch, "format");
    const des = p(fmt, "formatDesignation");
    p(des, "formatName", f.formatName);
    if (f.formatVersion) p(des, "formatVersion", f.formatVersion);
    p(fmt, "formatNote", f.role);
    p(o, "originalName", f.originalName);
    const part = p(o, "relationship");
    p(part, "relationshipType", "structural", { authority: "relationshipType" });
    p(part, "relationshipSubType", "is included in", { authority: "relationshipSubType" });
    const r = p(part, "relatedObjectIdentifier");
    p(r, "relatedObjectIdentifierType", f.partOfType ?? "Rillbook side");
    p(r, "relatedObjectIdentifierValue", f.sideIdentifier);
    if (f.derivedFrom) {
      const der = p(o, "relationship");
      p(der, "relationshipType", "derivation", { authority: "relationshipType" });
      p(der, "relationshipSubType", "is derived from", { authority: "relationshipSubType" });
      const rr = p(der, "relatedObjectIdentifier");
      p(rr, "relatedObjectIdentifierType", "Rillbook object key");
      p(rr, "relatedObjectIdentifierValue", f.derivedFrom);
    }
  }

  for (const e of record.events) {
    const ev = p(root, "event");
    const id = p(ev, "eventIdentifier");
    p(id, "eventIdentifierType", "Rillbook provenance event");
    p(id, "eventIdentifierValue", e.id);
    const uri = eventTypeUri(e.type);
    p(
      ev,
      "eventType",
      e.type,
      uri ? { authority: "eventType", authorityURI: EVENT_TYPE_AUTHORITY, valueURI: uri } : undefined,
    );
    p(ev, "eventDateTime", e.at);
    p(p(ev, "eventDetailInformation"), "eventDetail", e.detail);
    const out = p(ev, "eventOutcomeInformation");
    p(out, "eventOutcome", e.outcome);
    if (e.outcomeDetail) p(p(out, "eventOutcomeDetail"), "eventOutcomeDetailNote", e.outcomeDetail);
    if (e.agent) {
      const a = p(ev, "linkingAgentIdentifier");
      p(a, "linkingAgentIdentifierType", "Rillbook agent");
      p(a, "linkingAgentIdentifierValue", e.agent.id);
      p(a, "linkingAgentRole", e.agent.role);
    }
    for (const other of e.otherAgents ?? []) {
      const a = p(ev, "linkingAgentIdentifier");
      p(a, "linkingAgentIdentifierType", "Rillbook agent");
      p(a, "linkingAgentIdentifierValue", other.id);
      p(a, "linkingAgentRole", other.role);
    }
    for (const o of e.objects) {
      const l = p(ev, "linkingObjectIdentifier");
      p(l, "linkingObjectIdentifierType", o.type);
      p(l, "linkingObjectIdentifierValue", o.value);
      if (o.role) p(l, "linkingObjectRole", o.role);
    }
  }

  for (const a of record.agents) {
    const ag = p(root, "agent");
    const id = p(ag, "agentIdentifier");
    p(id, "agentIdentifierType", "Rillbook agent");
    p(id, "agentIdentifierValue", a.id);
    p(ag, "agentName", a.name);
    p(ag, "agentType", a.type, { authority: "agentType" });
    if (a.version) p(ag, "agentVersion", a.version);
    if (a.note) p(ag, "agentNote", a.note);
  }
  return root.end({ prettyPrint: true });
}
