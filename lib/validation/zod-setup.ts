import { z } from "zod";

// In the browser zod would probe whether it may compile its parsers with `Function(...)`;
// the Content-Security-Policy (lib/http/csp.ts) allows no eval, so the probe is refused
// and reported as a violation. Parse without compiling there: the same results, a little
// slower, and no eval allowed anywhere. Imported for its effect by the modules that hold
// the schemas a page uses, so it runs before the first parse.
if (typeof window !== "undefined") z.config({ jitless: true });

// Every message a failed parse gives reaches a person: a field under a form, a row of an
// import, the answer of an API call. zod's own words ("Invalid input: expected number,
// received NaN") are a programmer's; the error map below says instead, in a sentence, which
// field is wrong and what it takes. A schema's own message, where it gives one, still wins.

interface FieldWords {
  /** The field as a sentence names it: "the measured turntable speed". */
  name: string;
  /** For numbers: how to type it, "in rpm, for example 78". */
  how?: string;
  /** For numbers: the unit after a limit, "rpm" in "must be above 0 rpm". */
  unit?: string;
}

const FIELDS: Record<string, FieldWords> = {
  // Curves
  turnover: { name: "the bass turnover" },
  shelf: { name: "the low-frequency shelf" },
  rolloff: { name: "the treble rolloff" },
  highpass: { name: "the rumble high-pass" },
  ultrasonic: { name: "the ultrasonic zero" },
  unit: { name: "the unit" },
  reference: { name: "the level reference" },
  speedRatio: { name: "the speed ratio", how: "as transfer speed ÷ cut speed, for example 1.0" },
  spec: { name: "the curve" },
  overrides: { name: "the corners for these sides" },
  sampleRateHz: { name: "the sample rate", how: "in hertz, for example 96000", unit: "Hz" },
  frequenciesHz: { name: "the frequencies", how: "in hertz, for example 1000", unit: "Hz" },
  points: { name: "the measured points" },
  fit: { name: "the parameters to fit" },
  kind: { name: "the kind" },
  initial: { name: "the starting curve" },
  levelOffsetDb: { name: "the level offset", how: "in decibels, for example 0", unit: "dB" },
  renderFilter: { name: "whether to work out the digital filter" },
  name: { name: "the name" },
  notes: { name: "the notes" },
  changeNote: { name: "the note on this version" },
  corrects: { name: "the versions this one corrects", how: "as version numbers, for example 2" },
  correctionNote: { name: "the correction note" },
  correctingVersion: { name: "the correcting version", how: "as a whole number, for example 3" },
  // The bench
  sideIds: { name: "the sides" },
  sideId: { name: "the side" },
  discIds: { name: "the discs" },
  discId: { name: "the disc" },
  presetId: { name: "the preset" },
  presetVersion: { name: "the preset's version", how: "as a whole number, for example 3" },
  cutSpeedRpm: { name: "the speed the disc was cut at", how: "in rpm, for example 78", unit: "rpm" },
  transferSpeedRpm: { name: "the speed it was transferred at", how: "in rpm, for example 78", unit: "rpm" },
  rationale: { name: "why this curve" },
  evidenceKind: { name: "what the choice rests on" },
  evidence: { name: "the evidence" },
  uploadId: { name: "the upload" },
  contentType: { name: "the file's type" },
  contactName: { name: "the lab's contact person" },
  contactEmail: { name: "the lab's contact e-mail" },
  contactPhone: { name: "the lab's contact telephone" },
  contactAddress: { name: "the lab's postal address" },
  fileName: { name: "the file's name" },
  bytes: { name: "the file's size", how: "as a whole number of bytes, for example 52428800", unit: "bytes" },
  sha256: { name: "the SHA-256" },
  parts: { name: "the parts" },
  partNumbers: { name: "the part numbers" },
  partNumber: { name: "the part number", how: "as a whole number, for example 1" },
  etag: { name: "the ETag" },
  stylusSize: { name: "the stylus tip size" },
  stylusShape: { name: "the stylus shape" },
  measuredSpeedRpm: { name: "the measured turntable speed", how: "in rpm, for example 78.26", unit: "rpm" },
  chain: { name: "the transfer chain" },
  chainId: { name: "the chain from the register" },
  swapItemId: { name: "the item swapped in" },
  confirmDuplicate: { name: "the confirmation of the duplicate file" },
  channelMode: { name: "the channels" },
  rate: { name: "the access copy's rate" },
  bitDepth: { name: "the word length" },
  // The catalogue
  accessionId: { name: "the accession" },
  engineerId: { name: "the engineer" },
  shelfMark: { name: "the shelf mark" },
  labelName: { name: "the label" },
  catalogueNumber: { name: "the catalogue number" },
  format: { name: "the format" },
  base: { name: "the base" },
  diameterIn: { name: "the diameter", how: "in inches, for example 10", unit: "inches" },
  nominalSpeedRpm: { name: "the nominal speed", how: "in rpm, for example 78", unit: "rpm" },
  groove: { name: "the groove" },
  cut: { name: "the cut" },
  recordingDate: { name: "the recording date" },
  recordedFromYear: {
    name: "the first year it may have been recorded",
    how: "as four digits, for example 1928",
  },
  recordedToYear: {
    name: "the last year it may have been recorded",
    how: "as four digits, for example 1931",
  },
  conditionGrade: { name: "the condition" },
  conditionFlags: { name: "the condition flags" },
  conditionNotes: { name: "the condition notes" },
  handlingNotes: { name: "the handling notes" },
  sides: { name: "the sides" },
  designation: { name: "the side's designation" },
  matrixNumber: { name: "the matrix number" },
  take: { name: "the take" },
  title: { name: "the title" },
  performers: { name: "the performers" },
  version: { name: "the version", how: "as a whole number, for example 2" },
  identifier: { name: "the identifier" },
  source: { name: "the source" },
  receivedOn: { name: "the date received" },
  to: { name: "the new status" },
  status: { name: "the status" },
  reason: { name: "the reason" },
  // The equipment register
  make: { name: "the make" },
  model: { name: "the model" },
  serial: { name: "the serial number" },
  inServiceOn: { name: "the date it came into service" },
  outOfServiceOn: { name: "the date it went out of service" },
  stylusTip: { name: "the stylus tip size" },
  itemIds: { name: "the items" },
  calibratedOn: { name: "the date of the calibration" },
  testDisc: { name: "the test disc" },
  pointsKind: { name: "what the points give" },
  foundOn: { name: "the day it was found" },
  outcome: { name: "the outcome" },
  description: { name: "what was found" },
  // People and lists
  email: { name: "the e-mail address" },
  password: { name: "the password" },
  role: { name: "the role" },
  q: { name: "the search" },
  speed: { name: "the speed", how: "in rpm, for example 78", unit: "rpm" },
  sort: { name: "the sort order" },
  page: { name: "the page", how: "as a whole number, for example 2" },
  pageSize: { name: "the number of rows per page", how: "as a whole number, for example 50" },
};

/** One entry of a list, named after the list: "side 2", "point 3". */
const ENTRY: Record<string, string> = {
  sides: "side",
  points: "point",
  parts: "part",
  partNumbers: "part number",
  frequenciesHz: "frequency",
  sideIds: "side",
  discIds: "disc",
  rows: "row",
};

function humanize(key: string): string {
  return `the ${key
    .replace(/([a-z0-9])([A-Z])/g, "$1 $2")
    .replace(/[_-]+/g, " ")
    .toLowerCase()}`;
}

/** A frequency and a gain inside a level reference or a measured point. */
const HZ: FieldWords = { name: "the frequency", how: "in hertz, for example 1000", unit: "Hz" };
const DB: FieldWords = { name: "the level", how: "in decibels, for example 0", unit: "dB" };

/** The words for the field at `path`: its own name, the list entry it sits in, the corner whose value it is. */
export function fieldWords(path: readonly PropertyKey[]): FieldWords {
  const keys = path.map((k) => (typeof k === "symbol" ? String(k.description) : k));
  if (!keys.length) return { name: "this value" };
  const last = keys[keys.length - 1];
  const parent = keys.length > 1 ? keys[keys.length - 2] : undefined;
  if (typeof last === "number") {
    const list = typeof parent === "string" ? parent : "";
    const name = ENTRY[list]
      ? `${ENTRY[list]} ${last + 1}`
      : `entry ${last + 1} of ${FIELDS[list]?.name ?? "the list"}`;
    return { ...(FIELDS[list] ?? {}), name };
  }
  let words: FieldWords;
  if (parent === "reference" && (last === "hz" || last === "db"))
    words =
      last === "hz" ? { ...HZ, name: "the reference frequency" } : { ...DB, name: "the reference gain" };
  else if (last === "hz" || last === "db") words = last === "hz" ? HZ : DB;
  else if (last === "value" && typeof parent === "string" && FIELDS[parent])
    words = { name: FIELDS[parent].name, how: "as a number" };
  else words = FIELDS[last] ?? { name: humanize(last) };
  // A field inside a list entry says which entry: "the title of side 2".
  const index = keys.findLastIndex((k) => typeof k === "number");
  if (index > 0) {
    const list = keys[index - 1];
    const entry = typeof list === "string" && ENTRY[list] ? ENTRY[list] : "entry";
    words = { ...words, name: `${words.name} of ${entry} ${(keys[index] as number) + 1}` };
  }
  return words;
}

const cap = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

/** 44100 → "44 100": numbers in messages as the lab writes them. */
function num(n: number | bigint): string {
  const v = Number(n);
  if (!Number.isFinite(v)) return String(v);
  const [int, frac] = String(v).split(".");
  const grouped = Math.abs(v) >= 10_000 ? int.replace(/\B(?=(\d{3})+(?!\d))/g, " ") : int;
  return frac ? `${grouped}.${frac}` : grouped;
}

function orList(values: readonly unknown[]): string {
  const words = values.map((v) => String(v));
  if (words.length <= 1) return words.join("");
  return `${words.slice(0, -1).join(", ")} or ${words[words.length - 1]}`;
}

const plural = (n: number | bigint, one: string, many: string) => `${num(n)} ${Number(n) === 1 ? one : many}`;

const FORMATS: Record<string, (w: FieldWords) => string> = {
  email: (w) =>
    w.name === "the e-mail address"
      ? "Type an e-mail address, for example name@example.org."
      : `Type ${w.name} as an e-mail address, for example name@example.org.`,
  uuid: (w) => `${cap(w.name)} is not one Rillbook knows: choose it again from the list.`,
  guid: (w) => `${cap(w.name)} is not one Rillbook knows: choose it again from the list.`,
  date: (w) => `Type ${w.name} as a date, year first, for example 2026-11-30.`,
  datetime: (w) => `Type ${w.name} as a date and time, for example 2026-11-30T14:05:00Z.`,
  url: (w) => `Type ${w.name} as a web address, for example https://example.org.`,
};

/** The plain sentence for one failed check. Exported for the tests; zod calls it through `customError`. */
export function plainMessage(issue: z.core.$ZodRawIssue): string {
  const w = fieldWords(issue.path ?? []);
  const unit = w.unit ? ` ${w.unit}` : "";
  switch (issue.code) {
    case "invalid_type": {
      if (!issue.path?.length) return "Send the details as a JSON object with the fields named.";
      const missing = issue.input === undefined || issue.input === null;
      switch (issue.expected) {
        case "number":
        case "int":
        case "bigint": {
          const whole = issue.expected !== "number";
          return `Type ${w.name} ${w.how ?? (whole ? "as a whole number" : "as a number")}.`;
        }
        case "string":
          return missing ? `Fill in ${w.name}.` : `Type ${w.name} as text.`;
        case "boolean":
          return `Answer yes or no for ${w.name}.`;
        case "array":
          return missing ? `Give ${w.name}.` : `Give ${w.name} as a list.`;
        case "date":
          return `Type ${w.name} as a date, year first, for example 2026-11-30.`;
        default:
          return missing ? `Give ${w.name}.` : `${cap(w.name)} is not in a form Rillbook can read.`;
      }
    }
    case "too_small": {
      const min = issue.minimum;
      if (issue.origin === "string")
        return Number(min) <= 1
          ? `Fill in ${w.name}.`
          : `${cap(w.name)} needs at least ${plural(min, "character", "characters")}.`;
      if (issue.origin === "array" || issue.origin === "set")
        return Number(min) <= 1
          ? `Give at least one entry for ${w.name}.`
          : `Give at least ${plural(min, "entry", "entries")} for ${w.name}.`;
      if (issue.origin === "number" || issue.origin === "int" || issue.origin === "bigint")
        return issue.inclusive
          ? `${cap(w.name)} must be at least ${num(min)}${unit}.`
          : `${cap(w.name)} must be above ${num(min)}${unit}.`;
      return `${cap(w.name)} is too small.`;
    }
    case "too_big": {
      const max = issue.maximum;
      if (issue.origin === "string")
        return `Use at most ${plural(max, "character", "characters")} for ${w.name}.`;
      if (issue.origin === "array" || issue.origin === "set")
        return `Give at most ${plural(max, "entry", "entries")} for ${w.name}.`;
      if (issue.origin === "number" || issue.origin === "int" || issue.origin === "bigint")
        return issue.inclusive
          ? `${cap(w.name)} must be at most ${num(max)}${unit}.`
          : `${cap(w.name)} must be below ${num(max)}${unit}.`;
      return `${cap(w.name)} is too large.`;
    }
    case "invalid_format":
      return (
        FORMATS[issue.format] ??
        ((x: FieldWords) => `${cap(x.name)} is not written in a form Rillbook can read.`)
      )(w);
    case "invalid_value":
      return issue.values.length === 1
        ? `${cap(w.name)} can only be ${String(issue.values[0])}.`
        : `Choose ${w.name}: ${orList(issue.values)}.`;
    case "not_multiple_of":
      return `${cap(w.name)} must be a multiple of ${num(issue.divisor)}${unit}.`;
    case "unrecognized_keys":
      return issue.keys.length === 1
        ? `Rillbook takes no field called “${issue.keys[0]}”: leave it out.`
        : `Rillbook takes no fields called ${orList(issue.keys.map((k) => `“${k}”`)).replace(/ or /, " and ")}: leave them out.`;
    case "invalid_union":
      return `${cap(w.name)} is none of the values Rillbook takes there.`;
    case "invalid_key":
      return `${cap(w.name)} holds a name Rillbook does not take.`;
    case "invalid_element":
      return `${cap(w.name)} holds an entry Rillbook does not take.`;
    default:
      return `Check ${w.name}.`;
  }
}

z.config({ customError: (issue) => plainMessage(issue) });

/**
 * A number as a person types it, for schemas that read form text as well as JSON numbers:
 * spaces around it and a decimal comma ("78,26") are fine; "" and null mean "not given".
 * Anything else that is not a number becomes NaN, which the number schema after it refuses
 * with its own sentence.
 */
export function readNumber(v: unknown): unknown {
  if (v === null || v === undefined) return undefined;
  if (typeof v !== "string") return v;
  const t = v.trim();
  if (t === "") return undefined;
  const decimalComma = /^[+-]?\d*,\d+$/.test(t) ? t.replace(",", ".") : t;
  return /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(decimalComma) ? Number(decimalComma) : Number.NaN;
}
