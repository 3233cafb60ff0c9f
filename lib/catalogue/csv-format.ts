// The catalogue's spreadsheet format: reading, checking and writing it. Pure: no
// database and no framework, so the importer, the exporter and the unit tests share it.
// The importer on the server (lib/catalogue/csv.ts) adds what needs the database:
// accession identifiers and shelf marks already in the catalogue.
import crypto from "node:crypto";
import Papa from "papaparse";
import { stringify } from "csv-stringify/sync";
import type { z } from "zod";
import { valueText } from "@/lib/value-text";
import {
  type DiscInput,
  discFieldsSchema,
  discFormats,
  formatLabels,
  maxSidesPerDisc,
  sideInputSchema,
  type StoredDisc,
  type StoredSide,
  storedDiscFields,
  storedSideFields,
  toStoredDisc,
  toStoredSide,
  tooManySidesMessage,
} from "../validation/catalogue";
import { emptyFileMessage } from "../validation/text";

type DiscFields = z.infer<typeof discFieldsSchema>;
type SideInput = z.infer<typeof sideInputSchema>;

/** The most data rows one file may hold; a larger catalogue goes in several files. */
export const maxImportRows = 20_000;
/** Errors listed in one answer; the count says how many there are in all. */
export const maxListedErrors = 2_000;

type DiscField = keyof DiscFields;
type SideField = Exclude<keyof SideInput, "id">;

interface ColumnSpec {
  name: string;
  /** What the column holds, for the import page. */
  hint: string;
  required?: boolean;
  disc?: DiscField;
  side?: SideField;
}

/** The columns, in file order. One row per side; a disc's own columns repeat on each of its rows. */
export const catalogueColumnSpecs = [
  {
    name: "shelf_mark",
    disc: "shelfMark",
    required: true,
    hint: "The disc's shelf mark; rows with the same shelf mark are one disc.",
  },
  {
    name: "accession",
    disc: "accessionId",
    hint: "Accession identifier; empty means the accession chosen for the import.",
  },
  { name: "label", disc: "labelName", hint: "Record label as printed." },
  { name: "catalogue_number", disc: "catalogueNumber", hint: "The label's catalogue number." },
  { name: "format", disc: "format", required: true, hint: `One of ${discFormats.join(", ")}.` },
  {
    name: "base",
    disc: "base",
    hint: "Lacquer and transcription discs only: aluminium, glass, card or unknown.",
  },
  { name: "diameter_in", disc: "diameterIn", hint: "Diameter in inches, e.g. 10 or 16." },
  {
    name: "speed_rpm",
    disc: "nominalSpeedRpm",
    required: true,
    hint: "Nominal speed: 78, 80, 33.33 (or 33 1/3), 45, or another number.",
  },
  { name: "groove", disc: "groove", required: true, hint: "coarse or micro." },
  { name: "cut", disc: "cut", required: true, hint: "lateral or vertical." },
  { name: "recording_date", disc: "recordingDate", hint: "YYYY-MM-DD when known." },
  { name: "year_from", disc: "recordedFromYear", hint: "Earliest year it can have been recorded." },
  { name: "year_to", disc: "recordedToYear", hint: "Latest year it can have been recorded." },
  {
    name: "condition",
    disc: "conditionGrade",
    hint: "unassessed, excellent, good, fair, poor or unplayable.",
  },
  {
    name: "condition_flags",
    disc: "conditionFlags",
    hint: "Separated by semicolons: cracks; warp; residue …",
  },
  { name: "condition_notes", disc: "conditionNotes", hint: "What the condition grade leaves out." },
  { name: "handling_notes", disc: "handlingNotes", hint: "Care needed when the disc is handled or played." },
  {
    name: "side",
    side: "designation",
    hint: "Side designation (A, B, 1, 2 …); empty for a disc logged without sides.",
  },
  { name: "matrix_number", side: "matrixNumber", hint: "Matrix number from the run-out area." },
  { name: "take", side: "take", hint: "Take number or letter." },
  { name: "title", side: "title", hint: "Title of the side." },
  { name: "performers", side: "performers", hint: "Performers as credited." },
  { name: "side_notes", side: "notes", hint: "Anything else about this side." },
  {
    name: "version",
    hint: "The disc's version when it was exported: leave it as it is. Empty for a new disc.",
  },
  {
    name: "row_check",
    hint: "Written by the export so an import knows the disc's rows were left as they were: leave it as it is. Empty for a new disc.",
  },
] as const satisfies readonly ColumnSpec[];

export type CatalogueColumn = (typeof catalogueColumnSpecs)[number]["name"];
export const catalogueColumns: CatalogueColumn[] = catalogueColumnSpecs.map((c) => c.name);

const specs: readonly ColumnSpec[] = catalogueColumnSpecs;
const columnOfDiscField = new Map(specs.filter((c) => c.disc).map((c) => [c.disc as string, c.name]));
const columnOfSideField = new Map(specs.filter((c) => c.side).map((c) => [c.side as string, c.name]));
const sideColumns = specs.filter((c) => c.side).map((c) => c.name) as CatalogueColumn[];
const discColumnNames = specs.filter((c) => c.disc).map((c) => c.name) as CatalogueColumn[];
/** Columns an update never clears: a disc cannot be without them. */
const keptColumns = new Set<string>(["accession", ...specs.filter((c) => c.required).map((c) => c.name)]);

export interface ImportError {
  /** The spreadsheet row: the header is row 1, the first disc row is row 2. */
  row: number;
  /** The column's header name, or "" when the whole row or file is meant. */
  column: string;
  message: string;
}

export interface FileDuplicate {
  row: number;
  shelfMark: string;
  /** The row where the same shelf mark first appears in this file. */
  firstRow: number;
}

/** Where each column's cell sits in a row's `cells` (the order of `catalogueColumns`). */
export const columnIndex = Object.fromEntries(catalogueColumns.map((c, i) => [c, i])) as Record<
  CatalogueColumn,
  number
>;
const shelfMarkAt = columnIndex.shelf_mark;

/**
 * One row of the sheet: its cells in the order of `catalogueColumns` (absent columns read
 * as ""), and its shelf mark as a key (trimmed, lower case), worked out once.
 */
export interface SheetRow {
  row: number;
  key: string;
  cells: string[];
  /** The cells joined by `cellSeparator`, when the file's cells hold no separator (see `readCatalogueCsv`). */
  text?: string;
}

/** A row's cells by column name. */
export function rowValues(r: SheetRow): Record<CatalogueColumn, string> {
  return valuesOf(r.cells);
}

/** Cells by column name, for the few rows that are checked field by field. */
function valuesOf(cells: readonly string[]): Record<CatalogueColumn, string> {
  const values = {} as Record<CatalogueColumn, string>;
  for (let i = 0; i < catalogueColumns.length; i++) values[catalogueColumns[i]] = cells[i];
  return values;
}

export interface ReadSheet {
  rows: SheetRow[];
  errors: ImportError[];
  /** The columns the header names (a column it leaves out reads as empty cells). */
  columns: CatalogueColumn[];
  /** The accession identifiers the rows name (trimmed, lower case), each once. */
  accessions: string[];
  delimiter: Delimiter;
}

/** The separators a spreadsheet saves "CSV" with, by locale: all are read. */
export const delimiters = { ",": "commas", ";": "semicolons", "\t": "tabs" } as const;
export type Delimiter = keyof typeof delimiters;

// ---------------------------------------------------------------------------------
// Fields that look like spreadsheet formulas

const formulaStart = /^'*[=+\-@]/;

/**
 * A field that begins with =, +, - or @ would be run as a formula by a spreadsheet.
 * On export it gets one leading apostrophe, which spreadsheets take as "this is text";
 * apostrophes already in front of such a character get one more, so that removing
 * exactly one on import gives back the stored text whatever it was.
 */
export function protectFormula(value: string): string {
  return formulaStart.test(value) ? `'${value}` : value;
}

/** The inverse of `protectFormula`: drops one apostrophe in front of =, +, - or @. */
export function unprotectFormula(value: string): string {
  return value.startsWith("'") && formulaStart.test(value) ? value.slice(1) : value;
}

// ---------------------------------------------------------------------------------
// Reading

const utf8 = new TextDecoder("utf-8", { fatal: true });

/** Decodes an upload as UTF-8 text (a byte-order mark is dropped here or by the parser). */
export function decodeCsv(bytes: Uint8Array): string {
  if (bytes.byteLength === 0) throw new CsvFormatError(emptyFileMessage);
  try {
    return utf8.decode(bytes);
  } catch {
    const at = firstNonUtf8(bytes);
    const where = at < 0 ? "" : ` (line ${lineOfByte(bytes, at)} holds the first such byte)`;
    throw new CsvFormatError(
      `The file is not UTF-8 text${where}: it was saved in another encoding, such as Latin-1 or ` +
        "Windows-1252. Save it from the spreadsheet as “CSV UTF-8” and try again.",
    );
  }
}

/** The offset of the first byte that cannot start or continue a UTF-8 sequence, or -1. */
function firstNonUtf8(bytes: Uint8Array): number {
  for (let i = 0; i < bytes.length;) {
    const b = bytes[i];
    const follow = b < 0x80 ? 0 : b >> 5 === 6 ? 1 : b >> 4 === 14 ? 2 : b >> 3 === 30 ? 3 : -1;
    if (follow < 0) return i;
    for (let k = 1; k <= follow; k++) if (i + k >= bytes.length || (bytes[i + k] & 0xc0) !== 0x80) return i;
    i += follow + 1;
  }
  return -1;
}

function lineOfByte(bytes: Uint8Array, at: number): number {
  let line = 1;
  for (let i = 0; i < at; i++) if (bytes[i] === 0x0a) line++;
  return line;
}

/**
 * The separator the header is written with: the one of comma, semicolon and tab that
 * splits it into the most known column names (a comma when none does better).
 */
export function detectDelimiter(text: string): Delimiter {
  const firstLine = text.replace(/^\uFEFF/, "").split(/\r?\n/, 1)[0] ?? "";
  const known = new Set<string>(catalogueColumns);
  let best: Delimiter = ",";
  let bestScore = 0;
  for (const d of Object.keys(delimiters) as Delimiter[]) {
    const score = firstLine
      .split(d)
      .filter((h) => known.has(h.trim().replace(/^"|"$/g, "").trim().toLowerCase())).length;
    if (score > bestScore) {
      best = d;
      bestScore = score;
    }
  }
  return best;
}

/** A file that cannot be read at all (not text, not CSV). */
export class CsvFormatError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "CsvFormatError";
  }
}

/** A quoting fault the parser found, as the row and text line a person can find it on. */
function csvParseProblem(e: Papa.ParseError, text: string): ImportError {
  const row = (e.row ?? 0) + 1;
  let line = 1;
  for (let i = text.indexOf("\n"); i !== -1 && i < (e.index ?? 0); i = text.indexOf("\n", i + 1)) line++;
  const where = ` (text line ${line})`;
  switch (e.code) {
    case "MissingQuotes":
      return {
        row,
        column: "",
        message: `A quoted field opened in this row is never closed${where}. Check for a stray double quote.`,
      };
    case "InvalidQuotes":
      return {
        row,
        column: "",
        message: `A double quote inside a field is not doubled${where}. Write "" for a quote inside a quoted field.`,
      };
    default:
      return { row, column: "", message: `This row cannot be read as CSV${where}: ${e.message}.` };
  }
}

const isBlank = (cells: string[]) => cells.every((c) => c.trim() === "");

/**
 * A row as read: its cells kept as one text, joined by `cellSeparator`, when no cell of
 * the file can hold a separator; split into cells only when asked for. A file brought
 * back as exported is then checked row by row against the check its export wrote
 * (`checkedVersions`), without a cell of it being kept apart.
 */
class ReadRow implements SheetRow {
  #cells: string[] | undefined;
  constructor(
    readonly row: number,
    readonly key: string,
    readonly text: string,
  ) {}
  get cells(): string[] {
    return (this.#cells ??= this.text.split(cellSeparator));
  }
}

/**
 * Reads the text of a catalogue CSV into rows keyed by column. Checks the header
 * (unknown, repeated and missing columns), the number of fields on each row and the
 * row limit; the values themselves are checked by `buildDiscs`. Blank rows are skipped
 * but still counted, so row numbers match what a spreadsheet shows.
 *
 * The parser hands the rows over a part of the file at a time, and each part's cells are
 * let go once its rows are kept (see `ReadRow`): a file of thousands of rows never holds
 * all of its cells apart at once.
 */
export function readCatalogueCsv(text: string): ReadSheet {
  const delimiter = detectDelimiter(text);
  const none = { rows: [], columns: [], accessions: [], delimiter };
  // RFC 4180 fields: quoted fields may hold separators, doubled quotes and line breaks.
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  // A row is kept as one text only when no cell can hold the separators it is joined by.
  const joinable = body.indexOf(cellSeparator) < 0 && body.indexOf(rowSeparator) < 0;

  // Set from the parser's callback (kept in an object: the compiler does not follow the callback).
  const state = { header: null as string[] | null, problem: null as ImportError | null };
  /** The header's errors in column order; an unnamed column (by index) is one only if a row has a value in it. */
  let headerErrors: (ImportError | number)[] = [];
  let faultyHeader = false;
  /** Unnamed header columns, and those of them a row has a value in. */
  const unnamed: number[] = [];
  const unnamedWithValues = new Set<number>();
  let columnAt: number[] = [];
  let inOrder = false;
  let records = 0;
  let filled = 0;
  const rows: SheetRow[] = [];
  const rowErrors: ImportError[] = [];
  const accessions = new Set<string>();
  const accessionAt = columnIndex.accession;

  const takeHeader = (cells: string[]) => {
    const header = cells.map((h) => h.trim().toLowerCase());
    state.header = header;
    const known = new Set<string>(catalogueColumns);
    const at = new Map<string, number>();
    const errors: (ImportError | number)[] = [];
    header.forEach((name, i) => {
      if (name === "") {
        unnamed.push(i);
        errors.push(i);
        return;
      }
      if (!known.has(name)) {
        errors.push({
          row: 1,
          column: name,
          message: `Unknown column “${name}”. The columns are: ${catalogueColumns.join(", ")}.`,
        });
      } else if (at.has(name)) {
        errors.push({
          row: 1,
          column: name,
          message: `Column ${name} appears twice in the header (columns ${at.get(name)! + 1} and ${i + 1}).`,
        });
      } else {
        at.set(name, i);
      }
    });
    for (const c of specs) {
      if (c.required && !at.has(c.name))
        errors.push({
          row: 1,
          column: c.name,
          message: `The header has no ${c.name} column; it is required.`,
        });
    }
    headerErrors = errors;
    faultyHeader = errors.some((e) => typeof e !== "number");
    columnAt = catalogueColumns.map((name) => at.get(name) ?? -1);
    // A header in the export's own order (the usual case: a file exported and brought back)
    // lets each row keep the parser's array of cells rather than be copied into another.
    inOrder = header.length >= columnAt.length && columnAt.every((at, i) => at === i);
  };

  const takeRow = (cells: string[], row: number) => {
    const width = state.header!.length;
    for (const i of unnamed) if ((cells[i] ?? "").trim() !== "") unnamedWithValues.add(i);
    // Rows past the limit are only counted; a faulty header keeps none.
    if (++filled > maxImportRows || faultyHeader) return;
    if (cells.length > width && cells.slice(width).some((c) => c.trim() !== "")) {
      rowErrors.push({
        row,
        column: "",
        message:
          `This row has ${cells.length} fields but the header names ${width} columns. ` +
          `Check for an unquoted ${delimiter === "\t" ? "tab" : delimiter === ";" ? "semicolon" : "comma"}.`,
      });
      return;
    }
    let own: string[];
    if (inOrder) {
      own = cells;
      own.length = columnAt.length;
      for (let c = 0; c < own.length; c++) own[c] = unprotectFormula(own[c] ?? "");
    } else {
      own = new Array<string>(columnAt.length);
      for (let c = 0; c < columnAt.length; c++)
        own[c] = columnAt[c] < 0 ? "" : unprotectFormula(cells[columnAt[c]] ?? "");
    }
    const key = own[shelfMarkAt].trim().toLowerCase();
    const accession = own[accessionAt].trim().toLowerCase();
    if (accession) accessions.add(accession);
    rows.push(joinable ? new ReadRow(row, key, own.join(cellSeparator)) : { row, key, cells: own });
  };

  Papa.parse<string[]>(body, {
    delimiter,
    quoteChar: '"',
    escapeChar: '"',
    skipEmptyLines: false,
    chunkSize: readChunkChars,
    chunk: (result: Papa.ParseResult<string[]>, parser: Papa.Parser) => {
      // The parser numbers a part's rows from 0: its first is the file's record `records`.
      const base = records;
      const fault = result.errors[0];
      const end = fault ? (fault.row ?? 0) : result.data.length;
      for (let i = 0; i < end; i++) {
        const cells = result.data[i];
        const index = records++;
        if (state.header === null) takeHeader(cells);
        else if (!isBlank(cells)) takeRow(cells, index + 1);
      }
      if (fault) {
        state.problem = csvParseProblem({ ...fault, row: base + (fault.row ?? 0) }, body);
        parser.abort();
      }
    },
    // Parsing a text is synchronous: the rows are all read when parse returns.
    complete: () => undefined,
  });
  const { header, problem } = state;
  if (problem) return { ...none, errors: [problem] };
  // Nothing but blank lines (or nothing at all).
  if (header === null || (filled === 0 && isBlank(header)))
    return {
      ...none,
      errors: [{ row: 1, column: "", message: "The file is empty: the first row must name the columns." }],
    };
  const other = header.length === 1 ? /[|:^]/.exec(header[0]) : null;
  if (other)
    return {
      ...none,
      errors: [
        {
          row: 1,
          column: "",
          message:
            `The header is one column that holds “${other[0]}”: the file seems separated by ${other[0]}. ` +
            "Save it as CSV separated by commas, semicolons or tabs.",
        },
      ],
    };
  const errors = headerErrors.flatMap((e) => {
    if (typeof e !== "number") return [e];
    return unnamedWithValues.has(e)
      ? [
          {
            row: 1,
            column: `column ${e + 1}`,
            message: `Column ${e + 1} has values but no name in the header.`,
          },
        ]
      : [];
  });
  if (errors.length) return { ...none, errors };
  if (filled > maxImportRows) {
    return {
      ...none,
      errors: [
        {
          row: maxImportRows + 2,
          column: "",
          message:
            `The file has ${filled.toLocaleString("en-GB")} rows; one import takes at most ` +
            `${maxImportRows.toLocaleString("en-GB")}. Split it into several files.`,
        },
      ],
    };
  }
  if (filled === 0)
    return {
      ...none,
      errors: [{ row: 2, column: "", message: "The file has a header but no rows under it." }],
    };
  return {
    rows,
    errors: rowErrors,
    columns: catalogueColumns.filter((_, i) => columnAt[i] >= 0),
    accessions: [...accessions],
    delimiter,
  };
}

/** How much of the file the parser reads at a time, in characters (`readCatalogueCsv`). */
const readChunkChars = 64 * 1024;

// ---------------------------------------------------------------------------------
// Checking rows and grouping them into discs

export interface BuildOptions {
  /** The accession id for an identifier (case-insensitive), or undefined when there is none. */
  resolveAccession: (identifier: string) => string | undefined;
  /** Used for rows whose accession column is empty. */
  defaultAccessionId?: string;
  /** The disc already catalogued under a shelf mark (given in lower case): its rows update it. */
  existing?: (shelfMarkKey: string) => ExportDisc | undefined;
  /**
   * An update's empty cells clear their field (never the accession or a required column);
   * by default they leave the field as it is.
   */
  clearEmpty?: boolean;
  /** The columns the file has: a column it leaves out is never cleared. Default: all of them. */
  columns?: readonly CatalogueColumn[];
}

export interface BuiltDisc {
  /** The disc's first row in the file. */
  row: number;
  rows: number[];
  disc: DiscInput;
  accessionIdentifier: string;
  /** The version column: the disc's version when the file was exported (null for a new disc). */
  version: number | null;
}

export interface BuiltSheet {
  discs: BuiltDisc[];
  errors: ImportError[];
  duplicates: FileDuplicate[];
  /** Rows of data read (blank rows not counted). */
  rowCount: number;
}

const speedWords: Record<string, string> = { "33 1/3": "33.33", "33⅓": "33.33", "33-1/3": "33.33" };
const formatByLabel = new Map(discFormats.map((f) => [formatLabels[f].toLowerCase(), f]));

/** Lenient spellings a person types into a spreadsheet, turned into the stored codes. */
function normaliseCode(value: string): string {
  return value.trim().toLowerCase();
}

function discCandidate(
  values: Record<CatalogueColumn, string>,
  accessionId: string | undefined,
): Record<string, unknown> {
  const format = normaliseCode(values.format);
  const speed = values.speed_rpm.trim();
  return {
    accessionId: accessionId ?? "",
    shelfMark: values.shelf_mark,
    labelName: values.label,
    catalogueNumber: values.catalogue_number,
    format: formatByLabel.get(format) ?? format.replace(/[\s-]+/g, "_"),
    base: normaliseCode(values.base),
    diameterIn: values.diameter_in.trim(),
    nominalSpeedRpm: speedWords[speed] ?? speed,
    groove: normaliseCode(values.groove),
    cut: normaliseCode(values.cut),
    recordingDate: values.recording_date.trim(),
    recordedFromYear: values.year_from.trim(),
    recordedToYear: values.year_to.trim(),
    conditionGrade: normaliseCode(values.condition),
    conditionFlags: [...new Set(values.condition_flags.split(";").map(normaliseCode).filter(Boolean))],
    conditionNotes: values.condition_notes,
    handlingNotes: values.handling_notes,
  };
}

function sideCandidate(values: Record<CatalogueColumn, string>): Record<string, unknown> | null {
  if (sideColumns.every((c) => values[c].trim() === "")) return null;
  return {
    designation: values.side,
    matrixNumber: values.matrix_number,
    take: values.take,
    title: values.title,
    performers: values.performers,
    notes: values.side_notes,
  };
}

function issuesToErrors(
  row: number,
  issues: z.core.$ZodIssue[],
  columns: Map<string, string>,
): ImportError[] {
  return issues.map((issue) => ({
    row,
    column: columns.get(String(issue.path[0] ?? "")) ?? "",
    message: issue.message,
  }));
}

function sameValue(a: unknown, b: unknown): boolean {
  // Most cells are text, and most values are unchanged: compared directly, without writing both out as JSON.
  if (a === b) return true;
  if (typeof a === "string" && typeof b === "string") return false;
  return JSON.stringify(a ?? null) === JSON.stringify(b ?? null);
}

function shown(v: unknown): string {
  if (v === undefined || v === null || v === "" || (Array.isArray(v) && v.length === 0)) return "empty";
  return `“${Array.isArray(v) ? v.join("; ") : valueText(v)}”`;
}

/**
 * A row that updates a catalogued disc, with its empty cells taken from the disc as it is
 * stored (its own side's, matched by designation, for the side columns), unless the
 * archivist asked that empty cells clear their field.
 */
function fillFromExisting(
  values: Record<CatalogueColumn, string>,
  known: ExportDisc,
  clearEmpty: boolean,
  present: ReadonlySet<string>,
): Record<CatalogueColumn, string> {
  const stored = storedCellsOf(known);
  const out = { ...values };
  const fill = (c: CatalogueColumn) =>
    out[c].trim() === "" && (!clearEmpty || keptColumns.has(c) || !present.has(c));
  for (const c of discColumnNames) if (fill(c)) out[c] = stored[0][c];
  const designation = values.side.trim().toLowerCase();
  const side = designation ? stored.find((r) => r.side.toLowerCase() === designation) : undefined;
  if (side) for (const c of sideColumns) if (c !== "side" && fill(c)) out[c] = side[c];
  return out;
}

/** Whether two rows hold the same disc cells (the side columns aside). */
function sameDiscCells(a: Record<CatalogueColumn, string>, b: Record<CatalogueColumn, string>): boolean {
  for (const c of discColumnNames) if (a[c] !== b[c]) return false;
  return true;
}

function versionOf(cell: string): number | null | "bad" {
  const v = cell.trim();
  if (v === "") return null;
  return /^[1-9][0-9]{0,9}$/.test(v) ? Number(v) : "bad";
}

interface CheckedRow {
  row: number;
  key: string;
  version: number | null;
  accessionIdentifier: string;
  fields?: DiscFields;
  side?: SideInput | null;
  ok: boolean;
}

/**
 * Checks every row with the shared disc and side schemas, resolves accessions and
 * groups rows into discs by shelf mark. A disc's rows must sit together and agree on
 * every disc column; a shelf mark that comes back after other discs is reported as a
 * duplicate within the file. Only a file without errors gives discs to insert, but the
 * discs are listed either way so a preview can show them.
 */
export function buildDiscs(sheet: SheetRow[], options: BuildOptions): BuiltSheet {
  const errors: ImportError[] = [];
  const duplicates: FileDuplicate[] = [];
  const checked: CheckedRow[] = [];

  const present = new Set<string>(options.columns ?? catalogueColumns);
  let previous:
    | {
        key: string;
        accessionId: string | undefined;
        values: Record<CatalogueColumn, string>;
        disc: ReturnType<typeof discFieldsSchema.safeParse>;
      }
    | undefined;
  for (const { row, key, cells: rowCells } of sheet) {
    const rowErrors: ImportError[] = [];
    const cells = valuesOf(rowCells);
    const known = options.existing?.(key);
    const values = known ? fillFromExisting(cells, known, options.clearEmpty ?? false, present) : cells;
    const version = versionOf(values.version);
    if (version === "bad")
      rowErrors.push({
        row,
        column: "version",
        message: `The version must be the whole number the export wrote, not “${values.version.trim()}”. Leave it as exported; empty for a new disc.`,
      });
    const identifier = values.accession.trim();
    let accessionId: string | undefined;
    if (identifier) {
      accessionId = options.resolveAccession(identifier);
      if (!accessionId)
        rowErrors.push({
          row,
          column: "accession",
          message: `No accession has the identifier “${identifier}”. Record the accession first, or check the spelling.`,
        });
    } else {
      accessionId = options.defaultAccessionId;
      if (!accessionId)
        rowErrors.push({
          row,
          column: "accession",
          message:
            "No accession given: fill in the accession column, or choose an accession for rows that leave it empty.",
        });
    }
    // A disc's later rows repeat its columns: the same cells (and accession) give the same result.
    const disc =
      previous &&
      previous.key === key &&
      previous.accessionId === accessionId &&
      sameDiscCells(previous.values, values)
        ? previous.disc
        : discFieldsSchema.safeParse(discCandidate(values, accessionId));
    previous = { key, accessionId, values, disc };
    if (!disc.success) {
      // The accession is reported above in words a person can act on, not as a bad id.
      rowErrors.push(
        ...issuesToErrors(row, disc.error.issues, columnOfDiscField).filter((e) => e.column !== "accession"),
      );
    }
    const sideInput = sideCandidate(values);
    let side: SideInput | null = null;
    if (sideInput) {
      const parsed = sideInputSchema.safeParse(sideInput);
      if (parsed.success) side = parsed.data;
      else rowErrors.push(...issuesToErrors(row, parsed.error.issues, columnOfSideField));
    }
    errors.push(...rowErrors);
    checked.push({
      row,
      key,
      version: version === "bad" ? null : version,
      accessionIdentifier: identifier,
      fields: disc.success ? disc.data : undefined,
      side,
      ok: rowErrors.length === 0,
    });
  }

  // Group consecutive rows with the same shelf mark.
  const groups: CheckedRow[][] = [];
  const repeated = new Set<number>();
  const firstRowOf = new Map<string, number>();
  for (const r of checked) {
    const current = groups[groups.length - 1];
    if (r.key && current && current[0].key === r.key) {
      current.push(r);
      continue;
    }
    if (r.key && firstRowOf.has(r.key)) {
      const firstRow = firstRowOf.get(r.key)!;
      const shelfMark = r.fields?.shelfMark ?? r.key;
      duplicates.push({ row: r.row, shelfMark, firstRow });
      repeated.add(r.row);
      errors.push({
        row: r.row,
        column: "shelf_mark",
        message:
          `Shelf mark ${shelfMark} is already used by the disc at row ${firstRow}. Each disc ` +
          `needs its own shelf mark, and a disc's rows must sit together.`,
      });
      r.ok = false;
    } else if (r.key) {
      firstRowOf.set(r.key, r.row);
    }
    groups.push([r]);
  }

  const discs: BuiltDisc[] = [];
  for (const group of groups) {
    const head = group.find((r) => r.fields) ?? group[0];
    // Every row of a disc repeats the disc's columns: they must agree with its first row.
    if (head.fields) {
      for (const r of group) {
        if (r === head || !r.fields) continue;
        for (const [field, column] of columnOfDiscField) {
          const a = head.fields[field as DiscField];
          const b = r.fields[field as DiscField];
          if (!sameValue(a, b)) {
            errors.push({
              row: r.row,
              column,
              message:
                `Differs from row ${head.row}, the disc's first row: ${shown(b)} here, ${shown(a)} ` +
                `there. Every row of a disc must repeat the same disc values.`,
            });
          }
        }
      }
    }
    for (const r of group) {
      if (r !== head && r.version !== head.version && (r.version !== null || head.version !== null))
        errors.push({
          row: r.row,
          column: "version",
          message:
            `Differs from row ${head.row}, the disc's first row: ${shown(r.version)} here, ` +
            `${shown(head.version)} there. Every row of a disc carries the version it was exported at.`,
        });
    }
    const sides: SideInput[] = [];
    const sideRow = new Map<string, number>();
    for (const r of group) {
      if (r.side === null && group.length > 1 && r.ok) {
        errors.push({
          row: r.row,
          column: "side",
          message:
            `This row has no side, but shelf mark ${head.fields?.shelfMark ?? r.key} has other ` +
            `rows. Give every row a side; a disc without sides takes one row.`,
        });
      }
      if (!r.side) continue;
      const k = r.side.designation.toLowerCase();
      if (sideRow.has(k)) {
        errors.push({
          row: r.row,
          column: "side",
          message: `Side ${r.side.designation} is listed twice for this disc (rows ${sideRow.get(k)} and ${r.row}).`,
        });
        continue;
      }
      sideRow.set(k, r.row);
      sides.push(r.side);
    }
    // A repeated shelf mark is not a disc to add: the error above says why.
    if (!head.fields || repeated.has(group[0].row)) continue;
    // The rows' fields and sides are checked above; a whole disc adds only the number of sides.
    if (sides.length > maxSidesPerDisc)
      errors.push({ row: group[group.length - 1].row, column: "side", message: tooManySidesMessage });
    discs.push({
      row: head.row,
      rows: group.map((r) => r.row),
      disc: { ...head.fields, sides },
      accessionIdentifier: head.accessionIdentifier,
      version: head.version,
    });
  }

  errors.sort(
    (a, b) =>
      a.row - b.row ||
      catalogueColumns.indexOf(a.column as CatalogueColumn) -
        catalogueColumns.indexOf(b.column as CatalogueColumn),
  );
  return { discs, errors, duplicates, rowCount: sheet.length };
}

// ---------------------------------------------------------------------------------
// Writing

/**
 * A disc as the spreadsheet holds it: the stored fields (the one shape of a disc), with
 * the accession by identifier and the version it was exported at.
 */
export type ExportDisc = Omit<StoredDisc, "accessionId"> & {
  accessionIdentifier: string;
  /** Null (or left out) in a template or for a disc not yet in the catalogue. */
  version?: number | null;
  sides: StoredSide[];
};

const cell = (v: unknown): string =>
  v === null || v === undefined ? "" : Array.isArray(v) ? v.join(";") : valueText(v);

/**
 * The cells of one disc's rows, by column: one row per side, or one with empty side
 * columns. A catalogued disc's rows carry its check (`rowCheckOf`); a template's do not.
 */
function cellsOf(d: ExportDisc, withCheck = true): Record<CatalogueColumn, string>[] {
  const sides: (StoredSide | null)[] = d.sides.length ? d.sides : [null];
  const rows = sides.map((side) => {
    const values = {} as Record<CatalogueColumn, string>;
    for (const c of specs) values[c.name as CatalogueColumn] = exportedCell(d, side, c);
    return values;
  });
  if (withCheck && d.version !== null && d.version !== undefined) {
    const check = rowCheckOf(rows.map(checkedText));
    for (const r of rows) r.row_check = check;
  }
  return rows;
}

/** One cell as the export writes it: the disc's column, its side's (empty without a side), or the version. */
function exportedCell(d: ExportDisc, side: StoredSide | null, c: ColumnSpec): string {
  if (c.disc) return c.disc === "accessionId" ? d.accessionIdentifier : cell(d[c.disc]);
  if (c.side) return side ? cell(side[c.side]) : "";
  return c.name === "version" ? cell(d.version) : "";
}

const rowCheckAt = columnIndex.row_check;

/** A row's cells but its check, in the columns' order, joined by `cellSeparator`: what the check covers. */
function checkedText(values: Record<CatalogueColumn, string>): string {
  let text = values[catalogueColumns[0]];
  for (let i = 1; i < catalogueColumns.length; i++)
    if (i !== rowCheckAt) text += cellSeparator + values[catalogueColumns[i]];
  return text;
}

/**
 * A disc's row check: the first 96 bits of the SHA-256 of its rows' cells (the check's
 * own aside), the rows joined by `rowSeparator`, in URL-safe base64 after a letter (so no
 * spreadsheet reads it as a number or a date). The export writes it on each of the disc's
 * rows; an import that finds it still matching the rows knows they were left as exported,
 * and asks the database only whether the disc is still at that version (`checkedVersions`).
 * It seals nothing: a person who rewrites it only keeps their own edit from being read.
 */
function rowCheckOf(rowTexts: readonly string[]): string {
  const text = rowTexts.length === 1 ? rowTexts[0] : rowTexts.join(rowSeparator);
  return `k${sha256Base64url(text).slice(0, 16)}`;
}

/** SHA-256 in URL-safe base64: the one-shot `crypto.hash` where Node has it (20.12 on), else a Hash. */
const sha256Base64url: (text: string) => string =
  typeof crypto.hash === "function"
    ? (text) => crypto.hash("sha256", text, "base64url")
    : (text) => crypto.createHash("sha256").update(text).digest("base64url");

const storedCells = new WeakMap<ExportDisc, Record<CatalogueColumn, string>[]>();

/** cellsOf for a catalogued disc, written out once however many of the file's rows update it (its fields: no check). */
function storedCellsOf(d: ExportDisc): Record<CatalogueColumn, string>[] {
  let cells = storedCells.get(d);
  if (!cells) storedCells.set(d, (cells = cellsOf(d, false)));
  return cells;
}

export interface UnchangedSplit {
  /** The rows left to check: every row of a disc that is new, edited, or not as exported. */
  rows: SheetRow[];
  /** Discs whose rows are, cell for cell, what an export of the stored disc writes. */
  discs: number;
  /** Their rows. */
  rowCount: number;
}

/**
 * Sets aside the discs a file brings back exactly as exported: every row of the disc,
 * in the stored order, equal cell for cell (the version included) to the stored disc's
 * export. Such a disc changes nothing and needs no checking; in a batch exported and
 * brought back, most discs are like that. A shelf mark that appears in more than one
 * group of rows stays in, so the file's duplicates are still reported.
 */
export function setAsideUnchanged(
  sheet: SheetRow[],
  existing: (shelfMarkKey: string) => ExportDisc | undefined,
  columns: readonly CatalogueColumn[],
): UnchangedSplit {
  if (!columns.includes("version")) return { rows: sheet, discs: 0, rowCount: 0 };
  const present = new Set<string>(columns);
  // The check is no field: a disc is as exported when its fields are, whatever the check says.
  const compared = catalogueColumnSpecs.flatMap((c, i) =>
    present.has(c.name) && c.name !== "row_check" ? [{ spec: c, at: i }] : [],
  );
  return splitUnchanged(sheet, (first, end) => {
    const known = existing(sheet[first].key);
    if (known === undefined || Math.max(1, known.sides.length) !== end - first) return false;
    for (let i = first; i < end; i++)
      if (!rowAsExported(sheet[i].cells, known, i - first, compared)) return false;
    return true;
  });
}

/**
 * Splits a sheet into groups of consecutive rows with the same shelf mark and sets aside
 * the groups `asExported` says are a catalogued disc brought back unchanged. Only a shelf
 * mark that has one group is asked about, and never a group between two groups of one
 * shelf mark: taking it out would join them, and their repeat would go unreported.
 */
function splitUnchanged(
  sheet: readonly SheetRow[],
  asExported: (first: number, end: number) => boolean,
): UnchangedSplit {
  // Groups as [first, end) ranges of `sheet`.
  const starts: number[] = [];
  const groupsOfKey = new Map<string, number>();
  let lastKey: string | null = null;
  for (let i = 0; i < sheet.length; i++) {
    const key = sheet[i].key;
    if (key === "" || key !== lastKey) {
      starts.push(i);
      groupsOfKey.set(key, (groupsOfKey.get(key) ?? 0) + 1);
    }
    lastKey = key;
  }
  starts.push(sheet.length);
  const split: UnchangedSplit = { rows: [], discs: 0, rowCount: 0 };
  for (let g = 0; g + 1 < starts.length; g++) {
    const first = starts[g];
    const end = starts[g + 1];
    const key = sheet[first].key;
    const before = g > 0 ? sheet[starts[g - 1]].key : "";
    const between = before !== "" && end < sheet.length && sheet[end].key === before;
    if (key && groupsOfKey.get(key) === 1 && !between && asExported(first, end)) {
      split.discs++;
      split.rowCount += end - first;
    } else for (let i = first; i < end; i++) split.rows.push(sheet[i]);
  }
  return split;
}

export const cellSeparator = "\x1f";
export const rowSeparator = "\x1e";

/** What `checkedVersions` finds of a shelf mark: the version its rows were exported at, when they still match their check; else "". */
export interface CheckedVersion {
  key: string;
  version: string;
}

/**
 * For a file whose rows carry the version and the check the export wrote: each shelf mark
 * the file names, with the version its rows were exported at when they still match their
 * row check (every row of the disc, in the exported order, none edited), or "" when not
 * (edited, no check, a new disc, or a shelf mark in more than one group of rows, which
 * `splitUnchanged` never sets aside). The database then says which discs are still at
 * that version (records.ts's `readDiscFieldsUnlessAtVersion`): those changed nothing. Null
 * for a file without the two columns or with a separator in a cell (`readCatalogueCsv`):
 * its discs are compared field by field.
 */
export function checkedVersions(
  sheet: readonly SheetRow[],
  columns: readonly CatalogueColumn[],
): CheckedVersion[] | null {
  if (
    !columns.includes("version") ||
    !columns.includes("row_check") ||
    !sheet.length ||
    sheet[0].text === undefined
  )
    return null;
  const versions = new Map<string, string>();
  splitUnchanged(sheet, (first, end) => {
    versions.set(sheet[first].key, versionIfUnedited(sheet, first, end));
    return false;
  });
  for (const r of sheet) if (r.key && !versions.has(r.key)) versions.set(r.key, "");
  return [...versions].map(([key, version]) => ({ key, version }));
}

/** The version a disc's rows (kept as text, the check last) were exported at, when they match their check; else "". */
function versionIfUnedited(sheet: readonly SheetRow[], first: number, end: number): string {
  const head = sheet[first].text!;
  const cut = head.lastIndexOf(cellSeparator);
  const check = head.slice(cut + 1);
  const version = head.slice(head.lastIndexOf(cellSeparator, cut - 1) + 1, cut);
  if (check === "" || typeof versionOf(version) !== "number") return "";
  // Every row ends in the same version and check (their own separators included).
  const tail = head.slice(cut - version.length - 1);
  const texts = [head.slice(0, cut)];
  for (let i = first + 1; i < end; i++) {
    const text = sheet[i].text!;
    if (!text.endsWith(tail)) return "";
    texts.push(text.slice(0, text.length - check.length - 1));
  }
  return rowCheckOf(texts) === check ? version : "";
}

/** Sets aside the discs the database found still at the version their unedited rows carry (`checkedVersions`). */
export function setAsideAsExported(sheet: SheetRow[], asExported: ReadonlySet<string>): UnchangedSplit {
  return splitUnchanged(sheet, (first) => asExported.has(sheet[first].key));
}

/**
 * Whether a row's cells are what the export writes for the disc's side at `index` (its
 * only row when it has no sides), compared cell by cell without writing the row out.
 */
function rowAsExported(
  cells: readonly string[],
  d: ExportDisc,
  index: number,
  compared: readonly { spec: ColumnSpec; at: number }[],
): boolean {
  const side = d.sides[index] ?? null;
  for (const { spec, at } of compared) if (cells[at] !== exportedCell(d, side, spec)) return false;
  return true;
}

/** The rows of one disc as written to the file: formula-looking cells protected. */
function discRows(d: ExportDisc): string[][] {
  return cellsOf(d).map((values) => catalogueColumns.map((c) => protectFormula(values[c])));
}

/**
 * Writes discs as catalogue CSV: a header, then the rows of each disc. With a byte-order
 * mark and CRLF line ends, which spreadsheets open as UTF-8 without asking.
 */
export function toCatalogueCsv(
  discs: Iterable<ExportDisc>,
  options: { header?: boolean; bom?: boolean } = {},
): string {
  const rows: string[][] = [];
  if (options.header !== false) rows.push([...catalogueColumns]);
  for (const d of discs) rows.push(...discRows(d));
  return stringify(rows, { bom: options.bom ?? true, record_delimiter: "windows" });
}

/** A template to fill in: the header and three example rows (two sides of one disc, one lacquer without sides). */
export function catalogueTemplateCsv(): string {
  const example: ExportDisc[] = [
    {
      shelfMark: "78-0001",
      accessionIdentifier: "",
      labelName: "Example Label",
      catalogueNumber: "EX 100",
      format: "shellac_78",
      base: null,
      diameterIn: 10,
      nominalSpeedRpm: 78,
      groove: "coarse",
      cut: "lateral",
      recordingDate: null,
      recordedFromYear: 1928,
      recordedToYear: 1930,
      conditionGrade: "good",
      conditionFlags: ["wear"],
      conditionNotes: "",
      handlingNotes: "",
      sides: [
        {
          designation: "A",
          matrixNumber: "M-1234",
          take: "2",
          title: "First title",
          performers: "An orchestra",
          notes: "",
        },
        {
          designation: "B",
          matrixNumber: "M-1235",
          take: "1",
          title: "Second title",
          performers: "An orchestra",
          notes: "",
        },
      ],
    },
    {
      shelfMark: "LAC-0001",
      accessionIdentifier: "",
      labelName: "",
      catalogueNumber: "",
      format: "instantaneous_lacquer",
      base: "aluminium",
      diameterIn: 12,
      nominalSpeedRpm: 78,
      groove: "coarse",
      cut: "lateral",
      recordingDate: "1941-06-14",
      recordedFromYear: null,
      recordedToYear: null,
      conditionGrade: "fair",
      conditionFlags: ["residue", "delamination"],
      conditionNotes: "Lacquer lifting at the edge.",
      handlingNotes: "Wear gloves; hold by the edge only.",
      sides: [],
    },
  ];
  return toCatalogueCsv(example);
}

/** Short summary of a disc for the preview list. */
export function summariseDisc(d: BuiltDisc, accessionIdentifier = d.accessionIdentifier) {
  return {
    row: d.row,
    shelfMark: d.disc.shelfMark,
    accession: accessionIdentifier,
    labelName: d.disc.labelName,
    catalogueNumber: d.disc.catalogueNumber,
    format: d.disc.format,
    nominalSpeedRpm: d.disc.nominalSpeedRpm,
    sides: d.disc.sides.map((s) => s.designation),
  };
}
export type DiscSummary = ReturnType<typeof summariseDisc>;

// ---------------------------------------------------------------------------------
// What an update changes

export interface FieldChange {
  /** The stored field (as in the disc's record and its "disc.edited" events). */
  field: string;
  column: CatalogueColumn;
  before: unknown;
  after: unknown;
}

export interface SideChange {
  designation: string;
  /** A side the disc did not have. */
  added: boolean;
  changes: FieldChange[];
}

export interface DiscChanges {
  fields: FieldChange[];
  sides: SideChange[];
}

/**
 * What saving `after` over the stored disc would change, field by field; sides are
 * matched by designation (any case). A side the file leaves out is not a change: an
 * import never removes a side.
 */
export function discChanges(before: StoredDisc & { sides: StoredSide[] }, after: DiscInput): DiscChanges {
  const next = toStoredDisc(after);
  const fields = storedDiscFields
    .filter((f) => !sameValue(before[f], next[f]))
    .map((f) => ({
      field: f,
      column: columnOfDiscField.get(f) as CatalogueColumn,
      before: before[f],
      after: next[f],
    }));
  const old = new Map(before.sides.map((s) => [s.designation.toLowerCase(), s]));
  const sides: SideChange[] = [];
  for (const input of after.sides) {
    const s = toStoredSide(input);
    const o = old.get(s.designation.toLowerCase());
    const changes = storedSideFields
      .filter((f) => (o ? o[f] !== s[f] : s[f] !== ""))
      .map((f) => ({
        field: f,
        column: columnOfSideField.get(f) as CatalogueColumn,
        before: o ? o[f] : null,
        after: s[f],
      }));
    if (!o || changes.length) sides.push({ designation: s.designation, added: !o, changes });
  }
  return { fields, sides };
}

export function hasChanges(c: DiscChanges): boolean {
  return c.fields.length > 0 || c.sides.length > 0;
}
