// The catalogue's spreadsheet format without a database: reading, checking, grouping
// rows into discs, formula-looking fields, and writing back what was read.
import { createHash } from "node:crypto";
import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import {
  buildDiscs,
  type BuiltSheet,
  checkedVersions,
  cellSeparator,
  catalogueColumns,
  catalogueTemplateCsv,
  CsvFormatError,
  decodeCsv,
  detectDelimiter,
  discChanges,
  type ExportDisc,
  hasChanges,
  maxImportRows,
  protectFormula,
  readCatalogueCsv,
  rowSeparator,
  rowValues,
  setAsideAsExported,
  setAsideUnchanged,
  toCatalogueCsv,
  unprotectFormula,
} from "@/lib/catalogue/csv-format";
import { thrownBy } from "../support/errors";

const accessions = new Map([
  ["acc-2026-01", "6f1c2b7e-8a5d-4c1e-9b2a-0d3e4f5a6b7c"],
  ["acc-2026-02", "0a9b8c7d-6e5f-4a3b-8c2d-1e0f9a8b7c6d"],
]);
const resolveAccession = (identifier: string) => accessions.get(identifier.toLowerCase());

const header = catalogueColumns.join(",");

/** A row with the given columns set; the others empty. */
function row(values: Partial<Record<(typeof catalogueColumns)[number], string>>): string {
  return catalogueColumns
    .map((c) => {
      const v = values[c] ?? "";
      return /[",\r\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
    })
    .join(",");
}

const shellac = {
  shelf_mark: "MH-78-001",
  accession: "ACC-2026-01",
  format: "shellac_78",
  speed_rpm: "78",
  groove: "coarse",
  cut: "lateral",
} as const;

function check(
  text: string,
  defaultAccessionId?: string,
): BuiltSheet & { readErrors: ReturnType<typeof readCatalogueCsv>["errors"] } {
  const read = readCatalogueCsv(text);
  return { ...buildDiscs(read.rows, { resolveAccession, defaultAccessionId }), readErrors: read.errors };
}

describe("reading the file", () => {
  it("handles a byte-order mark, CRLF line ends and quoted fields with commas, quotes and line breaks", () => {
    const text = `\uFEFF${header}\r\n${row({ ...shellac, side: "A", title: 'Song of the "Rill", part 1', side_notes: "Label torn.\r\nSecond line." })}\r\n`;
    const { discs, errors, readErrors } = check(text);
    expect(readErrors).toEqual([]);
    expect(errors).toEqual([]);
    expect(discs).toHaveLength(1);
    expect(discs[0].disc.shelfMark).toBe("MH-78-001");
    expect(discs[0].disc.sides[0].title).toBe('Song of the "Rill", part 1');
    expect(discs[0].disc.sides[0].notes).toBe("Label torn.\r\nSecond line.");
  });

  it("decodes UTF-8 and refuses bytes that are not", () => {
    expect(decodeCsv(new TextEncoder().encode("shelf_mark\nÉcole"))).toBe("shelf_mark\nÉcole");
    const e = thrownBy(CsvFormatError, () => decodeCsv(new Uint8Array([0x73, 0xe9, 0x2c, 0xff])));
    expect(e.message).toMatch(/not UTF-8/);
  });

  it("accepts the columns in any order and in any case, and reads missing optional columns as empty", () => {
    const text = "Cut,GROOVE,speed_rpm,format,shelf_mark\nlateral,coarse,78,shellac_78,X-1\n";
    const { discs, errors } = check(text, accessions.get("acc-2026-01"));
    expect(errors).toEqual([]);
    expect(discs[0].disc).toMatchObject({
      shelfMark: "X-1",
      labelName: "",
      conditionGrade: "unassessed",
      sides: [],
    });
  });

  it("names unknown, repeated and missing header columns", () => {
    const read = readCatalogueCsv("shelf_mark,labl,format,format,groove,cut\nX,,,,,\n");
    expect(read.rows).toEqual([]);
    expect(read.errors).toEqual(
      expect.arrayContaining([
        expect.objectContaining({ row: 1, column: "labl", message: expect.stringMatching(/Unknown column/) }),
        expect.objectContaining({ row: 1, column: "format", message: expect.stringMatching(/twice/) }),
        expect.objectContaining({ row: 1, column: "speed_rpm", message: expect.stringMatching(/required/) }),
      ]),
    );
  });

  it("says which row a broken quote is on", () => {
    const read = readCatalogueCsv(
      `${header}\n${row(shellac)}\n${row({ ...shellac, shelf_mark: "B" }).replace("B", '"B')}\n`,
    );
    expect(read.errors).toHaveLength(1);
    expect(read.errors[0].row).toBe(3);
    expect(read.errors[0].message).toMatch(/quote/);
    expect(read.errors[0].message).toMatch(/text line 3\b/);
  });

  it("reads a file of many parts as papaparse reads it whole, with the row of a late broken quote", () => {
    // Over 64 KB, so the parser hands it over in parts; multi-line quoted cells and CRLF line
    // ends fall across the parts' edges. The reference: papaparse reading the whole text at once.
    const lines = [header];
    for (let i = 0; i < 2000; i++)
      lines.push(
        row({
          ...shellac,
          shelf_mark: `MH-${i}`,
          side: "A",
          title: `Song ${i}, "part" ${i % 7}`,
          side_notes: i % 3 ? `Line one of ${i}.\r\nLine two, with a comma.` : "",
        }),
      );
    const text = `${lines.join("\r\n")}\r\n`;
    expect(text.length).toBeGreaterThan(3 * 64 * 1024);
    const read = readCatalogueCsv(text);
    expect(read.errors).toEqual([]);
    const whole = Papa.parse<string[]>(text, { delimiter: ",", skipEmptyLines: true }).data.slice(1);
    expect(read.rows.map((r) => r.cells)).toEqual(whole);
    expect(read.rows.map((r) => r.row)).toEqual(whole.map((_, i) => i + 2));

    const broken = `${lines.slice(0, 1801).join("\r\n")}\r\n${row({ ...shellac, shelf_mark: "LATE" }).replace("LATE", '"LATE')}\r\n${lines.slice(1801).join("\r\n")}`;
    const late = readCatalogueCsv(broken);
    expect(late.errors).toHaveLength(1);
    expect(late.errors[0].row).toBe(1802);
    expect(late.errors[0].message).toMatch(/quote/);
  });

  it("refuses a row with more fields than the header", () => {
    const read = readCatalogueCsv(`${header}\n${row(shellac)},extra\n`);
    expect(read.errors).toEqual([
      expect.objectContaining({ row: 2, message: expect.stringMatching(/fields but the header names/) }),
    ]);
  });

  it("counts blank rows so row numbers match the spreadsheet, without making discs of them", () => {
    const blank = ",".repeat(catalogueColumns.length - 1);
    const vinyl = row({ ...shellac, shelf_mark: "MH-78-002", format: "vinyl" });
    const text = `${header}\n${row(shellac)}\n${blank}\n\n${vinyl}\n\n`;
    const { discs, errors, rowCount } = check(text);
    expect(rowCount).toBe(2);
    // A row whose disc columns do not read gives no disc, only its error.
    expect(discs.map((d) => d.row)).toEqual([2]);
    expect(errors).toEqual([expect.objectContaining({ row: 5, column: "format" })]);
  });

  it(`stops at ${maxImportRows} rows with a clear error`, () => {
    const line = row(shellac);
    const text = `${header}\n${Array.from({ length: maxImportRows + 1 }, () => line).join("\n")}`;
    const read = readCatalogueCsv(text);
    expect(read.rows).toEqual([]);
    expect(read.errors).toHaveLength(1);
    expect(read.errors[0].message).toMatch(/20[, ]?000/);
    expect(read.errors[0].message).toMatch(/20[, ]?001 rows/);
  });

  it("refuses an empty file and a header without rows", () => {
    expect(readCatalogueCsv("").errors[0].message).toMatch(/empty/);
    expect(readCatalogueCsv(`${header}\r\n`).errors[0].message).toMatch(/no rows/);
  });
});

describe("checking rows", () => {
  it("names the row and column of every bad value of a row, in the shared schemas' words", () => {
    const text = [
      header,
      row({ ...shellac, side: "A" }),
      row({ ...shellac, shelf_mark: "MH-78-002", speed_rpm: "fast", diameter_in: "ten" }),
      row({
        ...shellac,
        shelf_mark: "MH-78-003",
        condition_flags: "warp;mildew",
        year_from: "1931",
        year_to: "1929",
      }),
      row({ ...shellac, shelf_mark: "MH-78-004", base: "glass" }),
      row({ ...shellac, shelf_mark: "MH-78-005", matrix_number: "W-1" }),
    ].join("\n");
    const { errors } = check(text);
    expect(errors.map((e) => [e.row, e.column])).toEqual([
      [3, "diameter_in"],
      [3, "speed_rpm"],
      // A backwards year range is reported beside a bad value in another column of the row.
      [4, "year_to"],
      [4, "condition_flags"],
      [5, "base"],
      [6, "side"],
    ]);
    expect(errors[0].message).toMatch(/Diameter must be a number/);
    expect(errors[1].message).toMatch(/Nominal speed must be a number/);
    expect(errors[2].message).toMatch(/runs backwards/);
    expect(errors[4].message).toMatch(/lacquer and transcription/);
    expect(errors[5].message).toMatch(/side designation/);
    // A row with nothing else wrong hears the same.
    const years = check([header, row({ ...shellac, year_from: "1931", year_to: "1929" })].join("\n")).errors;
    expect(years).toEqual([
      expect.objectContaining({
        row: 2,
        column: "year_to",
        message: expect.stringMatching(/runs backwards/),
      }),
    ]);
  });

  it("resolves accessions by identifier, case-insensitively, falling back to the default only for empty cells", () => {
    const fallback = accessions.get("acc-2026-02")!;
    const text = [
      header,
      row({ ...shellac, accession: "acc-2026-01" }),
      row({ ...shellac, shelf_mark: "B", accession: "" }),
      row({ ...shellac, shelf_mark: "C", accession: "ACC-1999-99" }),
    ].join("\n");
    const { discs, errors } = check(text, fallback);
    expect(discs[0].disc.accessionId).toBe(accessions.get("acc-2026-01"));
    expect(discs[1].disc.accessionId).toBe(fallback);
    expect(errors).toEqual([
      expect.objectContaining({ row: 4, column: "accession", message: expect.stringMatching(/ACC-1999-99/) }),
    ]);
    // Without a default, the empty cell is the error.
    const without = check(text);
    expect(without.errors.map((e) => [e.row, e.column])).toEqual([
      [3, "accession"],
      [4, "accession"],
    ]);
  });

  it("takes the spellings people type: format labels, 33 1/3, upper case codes, spaced flags", () => {
    const text = [
      header,
      row({
        ...shellac,
        format: "Microgroove LP",
        speed_rpm: "33 1/3",
        groove: "MICRO",
        cut: "Lateral",
        condition: "Good",
        condition_flags: " Warp ; wear;warp ",
      }),
    ].join("\n");
    const { discs, errors } = check(text);
    expect(errors).toEqual([]);
    expect(discs[0].disc).toMatchObject({
      format: "microgroove_lp",
      nominalSpeedRpm: 33.33,
      groove: "micro",
      cut: "lateral",
      conditionGrade: "good",
      conditionFlags: ["warp", "wear"],
    });
  });
});

describe("grouping rows into discs", () => {
  it("makes one disc of consecutive rows with the same shelf mark, one side per row", () => {
    const text = [
      header,
      row({ ...shellac, side: "A", matrix_number: "W-140" }),
      row({ ...shellac, side: "B", matrix_number: "W-141" }),
      row({ ...shellac, shelf_mark: "MH-78-002" }),
    ].join("\n");
    const { discs, errors } = check(text);
    expect(errors).toEqual([]);
    expect(discs.map((d) => [d.row, d.rows, d.disc.sides.map((s) => s.matrixNumber)])).toEqual([
      [2, [2, 3], ["W-140", "W-141"]],
      [4, [4], []],
    ]);
  });

  it("says which disc column differs between rows of one disc", () => {
    const text = [
      header,
      row({ ...shellac, side: "A", label: "Rillton" }),
      row({ ...shellac, side: "B", label: "Rilton" }),
    ].join("\n");
    const { errors } = check(text);
    expect(errors).toEqual([expect.objectContaining({ row: 3, column: "label" })]);
    expect(errors[0].message).toMatch(/row 2/);
    expect(errors[0].message).toMatch(/“Rilton” here, “Rillton” there/);
  });

  it("treats 78 and 78.0 as the same speed on two rows of a disc", () => {
    const text = [
      header,
      row({ ...shellac, side: "A", speed_rpm: "78" }),
      row({ ...shellac, side: "B", speed_rpm: "78.0" }),
    ].join("\n");
    expect(check(text).errors).toEqual([]);
  });

  it("reports a side listed twice and a side-less row among sides", () => {
    const text = [
      header,
      row({ ...shellac, side: "A" }),
      row({ ...shellac, side: "a" }),
      row({ ...shellac }),
    ].join("\n");
    const { errors } = check(text);
    expect(errors.map((e) => [e.row, e.column])).toEqual([
      [3, "side"],
      [4, "side"],
    ]);
    expect(errors[0].message).toMatch(/listed twice/);
  });

  it("reports a shelf mark that comes back after another disc as a duplicate within the file", () => {
    const text = [
      header,
      row({ ...shellac, side: "A" }),
      row({ ...shellac, shelf_mark: "MH-78-002" }),
      row({ ...shellac, shelf_mark: "mh-78-001", side: "B" }),
    ].join("\n");
    const { errors, duplicates, discs } = check(text);
    expect(duplicates).toEqual([{ row: 4, shelfMark: "mh-78-001", firstRow: 2 }]);
    expect(discs.map((d) => d.row)).toEqual([2, 3]);
    expect(errors).toEqual([
      expect.objectContaining({ row: 4, column: "shelf_mark", message: expect.stringMatching(/row 2/) }),
    ]);
  });

  it("refuses a ninth side on the row that adds it", () => {
    const sides = "ABCDEFGHI".split("").map((s) => row({ ...shellac, side: s }));
    const { errors } = check([header, ...sides].join("\n"));
    expect(errors).toEqual([
      expect.objectContaining({ row: 10, column: "side", message: expect.stringMatching(/At most 8 sides/) }),
    ]);
  });
});

describe("fields that look like formulas", () => {
  it("gets one apostrophe on export and loses exactly one on import", () => {
    for (const v of ["=SUM(A1:A3)", "+44 20 7946", "-12 dB", "@label", "'=already", "''+two"]) {
      expect(protectFormula(v)).toBe(`'${v}`);
      expect(unprotectFormula(protectFormula(v))).toBe(v);
    }
    for (const v of ["plain", "", "'quoted text", "a=b"]) expect(protectFormula(v)).toBe(v);
    expect(unprotectFormula("'quoted text")).toBe("'quoted text");
    expect(unprotectFormula("'=1+1")).toBe("=1+1");
  });
});

const sample: ExportDisc[] = [
  {
    shelfMark: '=HYPERLINK("x")',
    accessionIdentifier: "ACC-2026-01",
    labelName: "@Rillton",
    catalogueNumber: "+R 100",
    format: "shellac_78",
    base: null,
    diameterIn: 10,
    nominalSpeedRpm: 78.26,
    groove: "coarse",
    cut: "lateral",
    recordingDate: "1929-04-02",
    recordedFromYear: 1929,
    recordedToYear: 1929,
    conditionGrade: "fair",
    conditionFlags: ["cracks", "wear"],
    conditionNotes: "Hairline crack, 2 cm, at 3 o'clock.\nPlays through.",
    handlingNotes: "-Broken shellac cuts: wear gloves.",
    sides: [
      {
        designation: "A",
        matrixNumber: "-W 140,2",
        take: "'=2",
        title: 'Serenade, "slow"',
        performers: "Marrow Hill Quartet",
        notes: "",
      },
      {
        designation: "B",
        matrixNumber: "W 141",
        take: "1",
        title: "",
        performers: "",
        notes: 'Label reads "B"',
      },
    ],
  },
  {
    shelfMark: "LAC-0007",
    accessionIdentifier: "acc-2026-02",
    labelName: "",
    catalogueNumber: "",
    format: "instantaneous_lacquer",
    base: "glass",
    diameterIn: 16,
    nominalSpeedRpm: 33.33,
    groove: "micro",
    cut: "vertical",
    recordingDate: null,
    recordedFromYear: null,
    recordedToYear: null,
    conditionGrade: "poor",
    conditionFlags: [],
    conditionNotes: "",
    handlingNotes: "",
    sides: [],
  },
];

describe("writing and reading back", () => {
  it("writes a header and one row per side, with side-less discs on one row", () => {
    const text = toCatalogueCsv(sample);
    expect(text.startsWith("\uFEFF")).toBe(true);
    const read = readCatalogueCsv(text);
    expect(read.errors).toEqual([]);
    expect(read.rows.map((r) => [r.row, rowValues(r).shelf_mark, rowValues(r).side])).toEqual([
      [2, '=HYPERLINK("x")', "A"],
      [3, '=HYPERLINK("x")', "B"],
      [4, "LAC-0007", ""],
    ]);
  });

  it("protects formula-looking fields in the file itself", () => {
    const text = toCatalogueCsv(sample);
    expect(text).toContain(`"'=HYPERLINK(""x"")"`);
    expect(text).toContain(",'@Rillton,");
    expect(text).toContain(",'+R 100,");
    expect(text).not.toMatch(/(^|,)[=+@]/m);
  });

  it("reads back exactly what it wrote", () => {
    const { discs, errors } = check(toCatalogueCsv(sample));
    expect(errors).toEqual([]);
    const back: ExportDisc[] = discs.map(({ disc, accessionIdentifier }) => ({
      shelfMark: disc.shelfMark,
      accessionIdentifier,
      labelName: disc.labelName,
      catalogueNumber: disc.catalogueNumber,
      format: disc.format,
      base: disc.base ?? null,
      diameterIn: disc.diameterIn ?? null,
      nominalSpeedRpm: disc.nominalSpeedRpm,
      groove: disc.groove,
      cut: disc.cut,
      recordingDate: disc.recordingDate ?? null,
      recordedFromYear: disc.recordedFromYear ?? null,
      recordedToYear: disc.recordedToYear ?? null,
      conditionGrade: disc.conditionGrade,
      conditionFlags: disc.conditionFlags,
      conditionNotes: disc.conditionNotes,
      handlingNotes: disc.handlingNotes,
      sides: disc.sides.map(({ designation, matrixNumber, take, title, performers, notes }) => ({
        designation,
        matrixNumber,
        take,
        title,
        performers,
        notes,
      })),
    }));
    expect(back).toEqual(sample);
  });

  it("offers a template that reads cleanly once an accession is chosen", () => {
    const template = catalogueTemplateCsv();
    const read = readCatalogueCsv(template);
    expect(read.errors).toEqual([]);
    expect(Object.keys(rowValues(read.rows[0]))).toEqual(catalogueColumns);
    expect(
      buildDiscs(read.rows, { resolveAccession, defaultAccessionId: accessions.get("acc-2026-01") }).errors,
    ).toEqual([]);
    expect(buildDiscs(read.rows, { resolveAccession }).errors.every((e) => e.column === "accession")).toBe(
      true,
    );
  });
});

describe("separators and encodings", () => {
  it("finds the separator from the header: comma, semicolon or tab", () => {
    expect(detectDelimiter("shelf_mark,format,speed_rpm\r\nX,y,78")).toBe(",");
    expect(detectDelimiter("\uFEFFshelf_mark;format;speed_rpm\r\nX;y;78")).toBe(";");
    expect(detectDelimiter('"shelf_mark"\t"format"\t"speed_rpm"\nX\ty\t78')).toBe("\t");
  });

  it("reads a semicolon file whose cells hold commas, and a tab file", () => {
    const semi = [
      "shelf_mark;accession;format;speed_rpm;groove;cut;label",
      "X-1;ACC-2026-01;shellac_78;78;coarse;lateral;Rill, Ltd",
    ].join("\r\n");
    const a = check(semi);
    expect(a.readErrors).toEqual([]);
    expect(a.errors).toEqual([]);
    expect(a.discs[0].disc.labelName).toBe("Rill, Ltd");
    const tabs = semi.replaceAll(";", "\t");
    const b = check(tabs);
    expect(b.errors).toEqual([]);
    expect(readCatalogueCsv(tabs).delimiter).toBe("\t");
  });

  it("names a separator it does not read", () => {
    const read = readCatalogueCsv("shelf_mark|format|speed_rpm\nX|shellac_78|78\n");
    expect(read.errors).toEqual([
      { row: 1, column: "", message: expect.stringMatching(/seems separated by \|/) },
    ]);
  });

  it("says an empty file is empty, and where the first byte that is not UTF-8 is", () => {
    expect(thrownBy(CsvFormatError, () => decodeCsv(new Uint8Array())).message).toBe(
      "The file is empty (0 bytes).",
    );
    const latin1 = new Uint8Array([...new TextEncoder().encode("shelf_mark\nX\nCaf"), 0xe9, 0x0a]);
    expect(thrownBy(CsvFormatError, () => decodeCsv(latin1)).message).toMatch(
      /not UTF-8 text \(line 3 holds the first such byte\)/,
    );
  });
});

describe("rows that update a catalogued disc", () => {
  const stored: ExportDisc = {
    shelfMark: "MH-78-001",
    accessionIdentifier: "ACC-2026-01",
    labelName: "Rillton",
    catalogueNumber: "R 1",
    format: "shellac_78",
    base: null,
    diameterIn: 10,
    nominalSpeedRpm: 78,
    groove: "coarse",
    cut: "lateral",
    recordingDate: null,
    recordedFromYear: 1930,
    recordedToYear: 1932,
    conditionGrade: "good",
    conditionFlags: ["wear"],
    conditionNotes: "",
    handlingNotes: "Hold by the edge.",
    version: 3,
    sides: [
      { designation: "A", matrixNumber: "W 1", take: "2", title: "Reel", performers: "A band", notes: "" },
      { designation: "B", matrixNumber: "W 2", take: "1", title: "Jig", performers: "A band", notes: "" },
    ],
  };
  const existing = (key: string) => (key === "mh-78-001" ? stored : undefined);
  const recordOf = (d: ExportDisc) => ({ ...d, accessionId: accessions.get("acc-2026-01")! });
  const build = (text: string, clearEmpty = false) => {
    const read = readCatalogueCsv(text);
    return buildDiscs(read.rows, { resolveAccession, existing, clearEmpty, columns: read.columns });
  };

  it("takes the stored value for an empty cell, and its side's by designation", () => {
    const text = [header, row({ shelf_mark: "mh-78-001", side: "B", title: "Jig in G", version: "3" })].join(
      "\n",
    );
    const { discs, errors } = build(text);
    expect(errors).toEqual([]);
    expect(discs[0].version).toBe(3);
    const changes = discChanges(recordOf(stored), discs[0].disc);
    expect(changes).toEqual({
      fields: [{ field: "shelfMark", column: "shelf_mark", before: "MH-78-001", after: "mh-78-001" }],
      sides: [
        {
          designation: "B",
          added: false,
          changes: [{ field: "title", column: "title", before: "Jig", after: "Jig in G" }],
        },
      ],
    });
  });

  it("clears an emptied field only when asked, never a required column or one the file leaves out", () => {
    // Required columns are in the header but empty; catalogue_number, condition and others are left out.
    const text =
      "shelf_mark,version,label,handling_notes,format,speed_rpm,groove,cut,side,title\nMH-78-001,3,,,,,,,A,\n";
    const kept = build(text);
    expect(kept.errors).toEqual([]);
    expect(hasChanges(discChanges(recordOf(stored), kept.discs[0].disc))).toBe(false);
    const cleared = build(text, true);
    expect(cleared.errors).toEqual([]);
    const changes = discChanges(recordOf(stored), cleared.discs[0].disc);
    expect(changes.fields.map((c) => [c.field, c.after])).toEqual([
      ["labelName", ""],
      ["handlingNotes", ""],
    ]);
    expect(changes.sides).toEqual([
      { designation: "A", added: false, changes: [expect.objectContaining({ field: "title", after: "" })] },
    ]);
  });

  it("lists a new side as added, and reports a bad or differing version", () => {
    const text = [
      header,
      row({ shelf_mark: "MH-78-001", side: "C", title: "Encore", version: "3" }),
      row({ shelf_mark: "MH-78-001", side: "A", version: "2" }),
      row({ ...shellac, shelf_mark: "MH-78-002", version: "v1" }),
    ].join("\n");
    const { discs, errors } = build(text);
    expect(errors.map((e) => [e.row, e.column])).toEqual([
      [3, "version"],
      [4, "version"],
    ]);
    expect(discChanges(recordOf(stored), discs[0].disc).sides[0]).toMatchObject({
      designation: "C",
      added: true,
      changes: [
        { field: "designation", after: "C" },
        { field: "title", after: "Encore" },
      ],
    });
  });

  it("sets aside a disc brought back exactly as exported, and checks every other one", () => {
    const exported = toCatalogueCsv([stored], { bom: false });
    const asIs = readCatalogueCsv(exported);
    const same = setAsideUnchanged(asIs.rows, existing, asIs.columns);
    expect(same).toEqual({ rows: [], discs: 1, rowCount: 2 });

    // One cell changed (side B's title): both of the disc's rows are checked as before.
    const edited = readCatalogueCsv(exported.replace("Jig", "Jig in G"));
    const split = setAsideUnchanged(edited.rows, existing, edited.columns);
    expect(split).toMatchObject({ discs: 0, rowCount: 0 });
    expect(split.rows.map((r) => r.row)).toEqual([2, 3]);

    // The sides in another order, a repeated shelf mark, or no version column: nothing set aside.
    const lines = exported.trimEnd().split("\r\n");
    const swapped = readCatalogueCsv([lines[0], lines[2], lines[1]].join("\n"));
    expect(setAsideUnchanged(swapped.rows, existing, swapped.columns).discs).toBe(0);
    const repeated = readCatalogueCsv(
      [...lines, row({ ...shellac, shelf_mark: "X-9" }), lines[1]].join("\n"),
    );
    const withRepeat = setAsideUnchanged(repeated.rows, existing, repeated.columns);
    expect(withRepeat.discs).toBe(0);
    expect(withRepeat.rows).toHaveLength(4);
    const noVersion = readCatalogueCsv(
      exported
        .split("\r\n")
        .map((l) => l.replace(/,[^,]*,[^,]*$/, ""))
        .join("\n"),
    );
    expect(noVersion.columns).not.toContain("version");
    expect(setAsideUnchanged(noVersion.rows, existing, noVersion.columns).discs).toBe(0);
  });

  it("never sets aside a disc between two groups of rows of one shelf mark, so the repeat is still reported", () => {
    const exported = toCatalogueCsv([stored], { bom: false });
    const lines = exported.trimEnd().split("\r\n");
    const other = row({ ...shellac, shelf_mark: "X-9", side: "A", version: "1" });
    // X-9 is split around the stored disc, which is brought back exactly as exported.
    const read = readCatalogueCsv(
      [lines[0], other, lines[1], lines[2], other.replace(",A,", ",B,")].join("\n"),
    );
    const split = setAsideUnchanged(read.rows, existing, read.columns);
    expect(split.discs).toBe(0);
    expect(split.rows.map((r) => r.row)).toEqual([2, 3, 4, 5]);
    const built = buildDiscs(split.rows, { resolveAccession, existing, columns: read.columns });
    expect(built.duplicates).toEqual([{ row: 5, shelfMark: "X-9", firstRow: 2 }]);
  });
});

describe("setting aside a disc brought back as the database writes its export", () => {
  const stored: ExportDisc = {
    shelfMark: "LAC-0042",
    accessionIdentifier: "ACC-2026-02",
    labelName: "",
    catalogueNumber: "=R 1",
    format: "instantaneous_lacquer",
    base: "aluminium",
    diameterIn: 12.5,
    nominalSpeedRpm: 33.33,
    groove: "micro",
    cut: "lateral",
    recordingDate: "1941-06-14",
    recordedFromYear: null,
    recordedToYear: null,
    conditionGrade: "fair",
    conditionFlags: ["residue", "wear"],
    conditionNotes: 'Lifting, "slightly", at the edge.\nSecond line.',
    handlingNotes: "",
    version: 7,
    sides: [
      { designation: "A", matrixNumber: "W 1", take: "2", title: "Reel", performers: "A band", notes: "" },
      {
        designation: "b",
        matrixNumber: "",
        take: "",
        title: "Jig",
        performers: "A band",
        notes: "Ends early",
      },
    ],
  };
  const sideless: ExportDisc = { ...stored, shelfMark: "LAC-0043", version: 1, sides: [] };
  const S = cellSeparator;
  const file = toCatalogueCsv([stored, sideless], { bom: false });
  const versionsOf = (text: string) =>
    checkedVersions(readCatalogueCsv(text).rows, readCatalogueCsv(text).columns);

  it("writes each disc's row check on its rows, as SHA-256 of the other cells says", () => {
    const cells = readCatalogueCsv(file).rows.map((r) => r.cells);
    const check = catalogueColumns.indexOf("row_check");
    expect(check).toBe(catalogueColumns.length - 1);
    // The construction, recomputed here with Node's SHA-256 (FIPS 180-4): each row's cells
    // but the check, joined by U+001F, the disc's rows joined by U+001E, the first 16
    // URL-safe base64 characters (RFC 4648 §5) after a "k".
    const expected = (rows: string[][]) =>
      `k${createHash("sha256")
        .update(rows.map((r) => r.slice(0, check).join(S)).join(rowSeparator))
        .digest("base64url")
        .slice(0, 16)}`;
    expect(cells[0][check]).toBe(expected(cells.slice(0, 2)));
    expect(cells[1][check]).toBe(cells[0][check]);
    expect(cells[2][check]).toBe(expected(cells.slice(2)));
    expect(cells[2][check]).toMatch(/^k[A-Za-z0-9_-]{16}$/);
    // The same disc exported again has the same check; any cell of it changed, another.
    expect(toCatalogueCsv([stored], { bom: false })).toBe(toCatalogueCsv([{ ...stored }], { bom: false }));
    const retitled = readCatalogueCsv(
      toCatalogueCsv([{ ...stored, sides: [stored.sides[0], { ...stored.sides[1], title: "Jig." }] }], {
        bom: false,
      }),
    );
    expect(retitled.rows[0].cells[check]).not.toBe(cells[0][check]);
    // A template's rows, and a disc not yet catalogued, have none.
    const template = readCatalogueCsv(catalogueTemplateCsv());
    expect(template.rows.map((r) => r.cells[check])).toEqual(template.rows.map(() => ""));
  });

  it("gives the exported version of each disc whose rows are left as exported, with or without sides", () => {
    expect(versionsOf(file)).toEqual([
      { key: "lac-0042", version: "7" },
      { key: "lac-0043", version: "1" },
    ]);
    const read = readCatalogueCsv(file);
    expect(setAsideAsExported(read.rows, new Set(["lac-0042"]))).toMatchObject({ discs: 1, rowCount: 2 });
    expect(setAsideAsExported(read.rows, new Set(["lac-0042", "lac-0043"]))).toEqual({
      rows: [],
      discs: 2,
      rowCount: 3,
    });
  });

  it("gives none for a disc with one cell changed, its sides in another order, another version or check", () => {
    const check = readCatalogueCsv(file).rows[0].cells[catalogueColumns.indexOf("row_check")];
    for (const edited of [
      file.replace("Ends early", "Ends early."),
      file.replaceAll("=R 1", "=R 2"),
      file.replace(/,7,k/g, ",8,k"),
      file.replaceAll(check, `${check.slice(0, -1)}${check.endsWith("A") ? "B" : "A"}`),
      file.replaceAll(check, ""),
    ]) {
      expect(versionsOf(edited)?.find((v) => v.key === "lac-0042")?.version, edited).toBe("");
      expect(versionsOf(edited)?.find((v) => v.key === "lac-0043")?.version).toBe(
        edited.includes("=R 2") ? "" : "1",
      );
    }
    const lines = file.trimEnd().split("\r\n");
    const swapped = versionsOf([lines[0], lines[2], lines[1], lines[3]].join("\n"));
    expect(swapped).toEqual([
      { key: "lac-0042", version: "" },
      { key: "lac-0043", version: "1" },
    ]);
    // A shelf mark in two groups of rows is never set aside, so its repeat is reported.
    expect(versionsOf([lines[0], lines[1], lines[3], lines[2]].join("\n"))).toEqual([
      { key: "lac-0042", version: "" },
      { key: "lac-0043", version: "" },
    ]);
  });

  it("says nothing of a file without the version or the check, or with a separator in a cell", () => {
    const without = (column: string) =>
      file
        .split("\r\n")
        .map((l) => l.split(",").filter((_, i) => i !== catalogueColumns.indexOf(column as never)))
        .map((cells) => cells.join(","))
        .join("\n");
    expect(versionsOf(without("row_check"))).toBeNull();
    expect(versionsOf(without("version"))).toBeNull();
    // A stored title that holds the separator the rows are joined by.
    const tricky: ExportDisc = {
      ...sideless,
      sides: [
        { designation: "A", matrixNumber: "", take: "", title: `Reel${S}A`, performers: "band", notes: "" },
      ],
    };
    const read = readCatalogueCsv(toCatalogueCsv([tricky], { bom: false }));
    expect(read.rows[0].text).toBeUndefined();
    expect(read.rows[0].cells[catalogueColumns.indexOf("title")]).toBe(`Reel${S}A`);
    expect(checkedVersions(read.rows, read.columns)).toBeNull();
    // Such a disc is still set aside by its fields.
    expect(setAsideUnchanged(read.rows, () => tricky, read.columns).discs).toBe(1);
  });
});
