/**
 * The Broadcast WAVE `bext` chunk (EBU Tech 3285 v2, 2011) and coding history
 * lines in the syntax of EBU R98.
 *
 * Layout of the chunk body (little-endian, strings ASCII, NUL-padded):
 *
 *   offset  size  field
 *        0   256  Description
 *      256    32  Originator
 *      288    32  OriginatorReference
 *      320    10  OriginationDate   "yyyy-mm-dd"
 *      330     8  OriginationTime   "hh:mm:ss"
 *      338     8  TimeReference     samples since midnight (low, high 32-bit words)
 *      346     2  Version
 *      348    64  UMID              SMPTE 330M (v1 and later)
 *      412     2  LoudnessValue     LUFS × 100, int16 (v2)
 *      414     2  LoudnessRange     LU × 100 (v2)
 *      416     2  MaxTruePeakLevel  dBTP × 100 (v2)
 *      418     2  MaxMomentaryLoudness LUFS × 100 (v2)
 *      420     2  MaxShortTermLoudness LUFS × 100 (v2)
 *      422   180  Reserved (zero)
 *      602     …  CodingHistory     CR/LF-terminated lines (EBU R98)
 */

export const BEXT_FIXED_BYTES = 602;
/** Version 2 of Tech 3285 added the loudness fields. */
export const BEXT_VERSION = 2;
/**
 * Written for a loudness field that was not measured; 0x7FFF (327.67) is not a
 * plausible LUFS/LU/dBTP × 100 value, and readers treat it as unset.
 */
const LOUDNESS_UNSET = 0x7fff;

export interface BextLoudness {
  /** Integrated loudness, LUFS (EBU R128). */
  loudnessValue: number | null;
  /** Loudness range, LU. */
  loudnessRange: number | null;
  /** Maximum true peak level, dBTP. */
  maxTruePeakLevel: number | null;
  maxMomentaryLoudness: number | null;
  maxShortTermLoudness: number | null;
}

export interface Bext extends BextLoudness {
  description: string;
  originator: string;
  originatorReference: string;
  /** "yyyy-mm-dd" as stored. */
  originationDate: string;
  /** "hh:mm:ss" as stored. */
  originationTime: string;
  /** First sample's count of samples since midnight. Exact up to 2^53 (centuries at 384 kHz). */
  timeReference: number;
  version: number;
  /** UMID as lowercase hex (128 characters), or "" when all zero. */
  umid: string;
  /** The coding history exactly as stored (CR/LF line ends kept). */
  codingHistory: string;
}

export type BextInput = Partial<Bext>;

const FIELDS = [
  ["description", 0, 256],
  ["originator", 256, 32],
  ["originatorReference", 288, 32],
  ["originationDate", 320, 10],
  ["originationTime", 330, 8],
] as const;

const LOUDNESS_FIELDS = [
  "loudnessValue",
  "loudnessRange",
  "maxTruePeakLevel",
  "maxMomentaryLoudness",
  "maxShortTermLoudness",
] as const;

function readAscii(bytes: Uint8Array, start: number, length: number): string {
  let end = start;
  const stop = Math.min(bytes.length, start + length);
  while (end < stop && bytes[end] !== 0) end++;
  let s = "";
  for (let i = start; i < end; i++) s += String.fromCharCode(bytes[i]);
  return s;
}

/** Parse a bext chunk body (the bytes after its 8-byte header). */
export function parseBext(body: Uint8Array): Bext {
  const view = new DataView(body.buffer, body.byteOffset, body.byteLength);
  const low = view.getUint32(338, true);
  const high = view.getUint32(342, true);
  const version = view.getUint16(346, true);
  let umid = "";
  let anyUmid = false;
  for (let i = 348; i < 412; i++) {
    umid += body[i].toString(16).padStart(2, "0");
    if (body[i] !== 0) anyUmid = true;
  }
  const out: Bext = {
    description: readAscii(body, 0, 256),
    originator: readAscii(body, 256, 32),
    originatorReference: readAscii(body, 288, 32),
    originationDate: readAscii(body, 320, 10),
    originationTime: readAscii(body, 330, 8),
    timeReference: high * 2 ** 32 + low,
    version,
    umid: anyUmid ? umid : "",
    loudnessValue: null,
    loudnessRange: null,
    maxTruePeakLevel: null,
    maxMomentaryLoudness: null,
    maxShortTermLoudness: null,
    codingHistory: readAscii(body, BEXT_FIXED_BYTES, body.length - BEXT_FIXED_BYTES),
  };
  // Before version 2 these 10 bytes were part of the reserved area.
  if (version >= 2) {
    LOUDNESS_FIELDS.forEach((name, i) => {
      const raw = view.getInt16(412 + 2 * i, true);
      out[name] = raw === LOUDNESS_UNSET ? null : raw / 100;
    });
  }
  return out;
}

/**
 * Letters that Unicode does not decompose into a base letter and marks (NFKD leaves them
 * whole), written as the usual Latin transliteration (as in library romanization tables).
 */
const LETTERS: Record<string, string> = {
  ß: "ss",
  ẞ: "SS",
  æ: "ae",
  Æ: "AE",
  œ: "oe",
  Œ: "OE",
  ø: "o",
  Ø: "O",
  ł: "l",
  Ł: "L",
  đ: "d",
  Đ: "D",
  ð: "d",
  Ð: "D",
  þ: "th",
  Þ: "Th",
  ħ: "h",
  Ħ: "H",
  ı: "i",
  ŀ: "l",
  Ŀ: "L",
  ŧ: "t",
  Ŧ: "T",
  ĸ: "k",
  ŋ: "ng",
  Ŋ: "NG",
  ſ: "s",
  µ: "u",
  μ: "u",
  "‘": "'",
  "’": "'",
  "‚": "'",
  "‛": "'",
  "“": '"',
  "”": '"',
  "„": '"',
  "‟": '"',
  "«": '"',
  "»": '"',
  "‹": "'",
  "›": "'",
  "‐": "-",
  "‑": "-",
  "‒": "-",
  "–": "-",
  "—": "-",
  "―": "-",
  "−": "-",
  "•": "*",
  "·": ".",
  "×": "x",
  "°": " deg",
  "⁄": "/",
};

/**
 * Text in the ASCII that bext strings are (EBU Tech 3285): each letter in its nearest
 * faithful form ("Pathé" → "Pathe", "Łódź" → "Lodz", "Straße" → "Strasse"): the table
 * above, then Unicode compatibility decomposition (NFKD) with the combining marks left out.
 * A character with no Latin form becomes "?", so a reader sees that something was there.
 * Control characters are dropped (line breaks too, unless `keepLineBreaks`, for the
 * coding history, whose lines end in CR/LF). Nothing here throws: a render never fails
 * on a name.
 */
export function bextAscii(text: string, opts: { keepLineBreaks?: boolean } = {}): string {
  let out = "";
  for (const ch of text) {
    const mapped = LETTERS[ch];
    if (mapped !== undefined) {
      out += mapped;
      continue;
    }
    for (const part of ch.normalize("NFKD")) {
      const c = part.codePointAt(0)!;
      if (c >= 0x20 && c <= 0x7e) out += part;
      else if (opts.keepLineBreaks && (c === 0x0d || c === 0x0a)) out += part;
      else if (
        /\p{M}/u.test(part) ||
        c < 0x20 ||
        (c >= 0x7f && c <= 0x9f) ||
        c === 0xfeff ||
        (c >= 0x200b && c <= 0x200f)
      )
        continue;
      else if (/\s/u.test(part)) out += " ";
      else out += LETTERS[part] ?? "?";
    }
  }
  return out;
}

/** The coding history as the chunk stores it (ASCII, CR/LF kept): its length sets the chunk's size. */
export function bextCodingHistory(history: string): string {
  return bextAscii(history, { keepLineBreaks: true });
}

function checkAscii(name: string, value: string, max: number): void {
  if (value.length > max)
    throw new RangeError(`bext ${name} is ${value.length} characters; EBU Tech 3285 allows ${max}.`);
  for (let i = 0; i < value.length; i++) {
    const c = value.charCodeAt(i);
    if (c < 0x20 && c !== 0x0d && c !== 0x0a)
      throw new RangeError(`bext ${name} holds a control character at position ${i}.`);
    if (c > 0x7e)
      throw new RangeError(
        `bext ${name} holds a non-ASCII character at position ${i} ("${value[i]}"); EBU Tech 3285 strings are ASCII.`,
      );
  }
}

/** The free-text fields: written in their ASCII form (bextAscii) and cut to the field's size. */
const TEXT_FIELDS = new Set(["description", "originator", "originatorReference"]);

/**
 * The bext chunk body for these fields: 602 bytes plus the coding history, padded to an
 * even length. Description, Originator and OriginatorReference take any text (its ASCII
 * form, cut to fit); the date and time must be in Tech 3285's form.
 */
export function encodeBext(input: BextInput): Uint8Array {
  const history = bextCodingHistory(input.codingHistory ?? "");
  const length = BEXT_FIXED_BYTES + history.length;
  const body = new Uint8Array(length + (length & 1));
  const view = new DataView(body.buffer);
  for (const [name, offset, size] of FIELDS) {
    const raw = input[name] ?? "";
    const value = TEXT_FIELDS.has(name) ? bextAscii(raw).slice(0, size) : raw;
    checkAscii(name, value, size);
    for (let i = 0; i < value.length; i++) body[offset + i] = value.charCodeAt(i);
  }
  if (input.originationDate && !/^\d{4}[-_:. ]\d{2}[-_:. ]\d{2}$/.test(input.originationDate)) {
    throw new RangeError(
      `bext originationDate "${input.originationDate}" is not yyyy-mm-dd (EBU Tech 3285).`,
    );
  }
  if (input.originationTime && !/^\d{2}[-_:. ]\d{2}[-_:. ]\d{2}$/.test(input.originationTime)) {
    throw new RangeError(`bext originationTime "${input.originationTime}" is not hh:mm:ss (EBU Tech 3285).`);
  }
  const timeReference = input.timeReference ?? 0;
  if (!Number.isSafeInteger(timeReference) || timeReference < 0)
    throw new RangeError("bext timeReference must be a whole number of samples ≥ 0.");
  view.setUint32(338, timeReference % 2 ** 32, true);
  view.setUint32(342, Math.floor(timeReference / 2 ** 32), true);
  view.setUint16(346, input.version ?? BEXT_VERSION, true);
  const umid = input.umid ?? "";
  if (umid !== "") {
    if (!/^([0-9a-fA-F]{2}){32}$|^([0-9a-fA-F]{2}){64}$/.test(umid))
      throw new RangeError("bext umid must be 32 or 64 bytes of hex (SMPTE 330M basic or extended UMID).");
    for (let i = 0; i < umid.length / 2; i++) body[348 + i] = parseInt(umid.slice(2 * i, 2 * i + 2), 16);
  }
  LOUDNESS_FIELDS.forEach((name, i) => {
    const value = input[name];
    let raw = LOUDNESS_UNSET;
    if (value !== null && value !== undefined) {
      raw = Math.round(value * 100);
      if (raw < -32768 || raw >= LOUDNESS_UNSET)
        throw new RangeError(`bext ${name} ${value} is outside the int16 × 0.01 range.`);
    }
    view.setInt16(412 + 2 * i, raw, true);
  });
  for (let i = 0; i < history.length; i++) body[BEXT_FIXED_BYTES + i] = history.charCodeAt(i);
  return body;
}

/** One line of coding history (EBU R98). Only `algorithm` is required. */
export interface CodingHistoryLine {
  /** A= coding algorithm: "ANALOGUE", "PCM", "MPEG1L2", … */
  algorithm: string;
  /** F= sampling frequency, Hz. */
  samplingHz?: number;
  /** B= bit rate, kbit/s per channel (compressed coding only). */
  bitRateKbps?: number;
  /** W= word length, bits. */
  wordLength?: number;
  /** M= mode: "mono", "stereo", "dual-mono", "joint-stereo". */
  mode?: string;
  /** T= free ASCII text. */
  text?: string;
}

/**
 * Format one R98 line, CR/LF-terminated. R98 separates parameters with commas,
 * so commas (and line breaks) in the free text are replaced by semicolons, the
 * separator R98's own examples use inside T=. Non-ASCII characters are written
 * in their nearest ASCII form (µ → u) since bext strings are ASCII.
 */
export function formatCodingHistoryLine(line: CodingHistoryLine): string {
  const parts = [`A=${asciiText(line.algorithm)}`];
  if (line.samplingHz !== undefined) parts.push(`F=${line.samplingHz}`);
  if (line.bitRateKbps !== undefined) parts.push(`B=${line.bitRateKbps}`);
  if (line.wordLength !== undefined) parts.push(`W=${line.wordLength}`);
  if (line.mode !== undefined) parts.push(`M=${line.mode}`);
  if (line.text !== undefined && line.text !== "") parts.push(`T=${asciiText(line.text)}`);
  return `${parts.join(",")}\r\n`;
}

/** Parse coding history text into its lines (for display and tests). */
export function parseCodingHistory(history: string): CodingHistoryLine[] {
  const lines: CodingHistoryLine[] = [];
  for (const raw of history.split(/\r\n|\n|\r/)) {
    if (raw.trim() === "") continue;
    const line: CodingHistoryLine = { algorithm: "" };
    // T= is last and may not be split on commas.
    const t = raw.indexOf("T=");
    const head = t >= 0 && (t === 0 || raw[t - 1] === ",") ? raw.slice(0, t) : raw;
    if (head !== raw) line.text = raw.slice(t + 2);
    for (const part of head.split(",")) {
      const [key, ...rest] = part.split("=");
      const value = rest.join("=");
      if (key === "A") line.algorithm = value;
      else if (key === "F") line.samplingHz = Number(value);
      else if (key === "B") line.bitRateKbps = Number(value);
      else if (key === "W") line.wordLength = Number(value);
      else if (key === "M") line.mode = value;
    }
    lines.push(line);
  }
  return lines;
}

function asciiText(text: string): string {
  return bextAscii(text.replace(/\s*[\r\n,]+\s*/g, "; "));
}
