// Importing and exporting the catalogue as CSV, against the running test app and its
// database: previews write nothing, a bad file writes nothing, a clean file goes in as
// one transaction with one import event, and export → import gives back the same discs.
import { createHash } from "node:crypto";
import { parse } from "csv-parse/sync";
import { stringify } from "csv-stringify/sync";
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import {
  catalogueColumns,
  checkedVersions,
  readCatalogueCsv,
  rowValues,
  toCatalogueCsv,
} from "@/lib/catalogue/csv-format";
import {
  readDiscFieldsByShelfMarks,
  readDiscFieldsUnlessAtVersion,
  readDiscs,
} from "@/lib/catalogue/records";
import { api, appUrl, type Json, sameOrigin, signInCookie } from "../support/app";
import { testDb } from "../support/db";

let archivist: string;
let curator: string;
let admin: string;
const stamp = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 6)}`.toUpperCase();

function account(role: string) {
  return demoAccounts.find((a) => a.role === role)!;
}

beforeAll(async () => {
  archivist = await signInCookie(account("archivist").email, account("archivist").password);
  curator = await signInCookie(account("curator").email, account("curator").password);
  admin = await signInCookie(account("admin").email, account("admin").password);
}, 60_000); // three sign-ins hash three passwords: slow on a busy machine

afterAll(async () => {
  await testDb.destroy();
});

type Column = (typeof catalogueColumns)[number];
type Row = Partial<Record<Column, string>>;

function csvOf(rows: Row[]): string {
  const cell = (v: string) => (/[",\r\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v);
  return (
    [
      catalogueColumns.join(","),
      ...rows.map((r) => catalogueColumns.map((c) => cell(r[c] ?? "")).join(",")),
    ].join("\r\n") + "\r\n"
  );
}

async function newAccession(tag: string): Promise<{ id: string; identifier: string }> {
  const identifier = `IMP-${stamp}-${tag}`;
  const res = await api("/api/accessions", {
    cookie: archivist,
    method: "POST",
    body: { identifier, source: "Bequest of a test collector", receivedOn: "2026-11-30" },
  });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return { id: res.body.accession.id, identifier };
}

/** Sends a CSV as multipart form-data (the page's way) or as a text/csv body with the fields in the query. */
async function upload(
  path: "/api/imports/preview" | "/api/imports",
  csv: string,
  opts: { cookie: string; fields?: Record<string, string>; fileName?: string; as?: "multipart" | "text" },
): Promise<{ status: number; body: Json }> {
  let res: Response;
  if (opts.as === "text") {
    const query = new URLSearchParams({ ...opts.fields, fileName: opts.fileName ?? "discs.csv" });
    res = await fetch(`${appUrl}${path}?${query}`, {
      method: "POST",
      headers: {
        ...sameOrigin,
        cookie: opts.cookie,
        accept: "application/json",
        "content-type": "text/csv; charset=utf-8",
      },
      body: csv,
    });
  } else {
    const form = new FormData();
    form.set("file", new Blob([csv], { type: "text/csv" }), opts.fileName ?? "discs.csv");
    for (const [k, v] of Object.entries(opts.fields ?? {})) form.set(k, v);
    res = await fetch(`${appUrl}${path}`, {
      method: "POST",
      headers: { ...sameOrigin, cookie: opts.cookie, accept: "application/json" },
      body: form,
    });
  }
  const text = await res.text();
  let body: unknown = text;
  try {
    body = JSON.parse(text);
  } catch {
    /* not JSON */
  }
  return { status: res.status, body };
}

async function importFile(csv: string, fields: Record<string, string> = {}, fileName = "discs.csv") {
  const preview = await upload("/api/imports/preview", csv, { cookie: archivist, fields, fileName });
  expect(preview.status, JSON.stringify(preview.body)).toBe(200);
  expect(preview.body.errors).toEqual([]);
  const done = await upload("/api/imports", csv, {
    cookie: archivist,
    fields: { ...fields, confirm: "true", sha256: preview.body.sha256 },
    fileName,
  });
  expect(done.status, JSON.stringify(done.body)).toBe(201);
  return done.body as { imported: number; sides: number; rows: number; sha256: string; eventId: string };
}

async function exportCsv(
  query: Record<string, string>,
  cookie = archivist,
): Promise<{ status: number; text: string; headers: Headers }> {
  const res = await fetch(`${appUrl}/api/discs/export?${new URLSearchParams(query)}`, {
    headers: { cookie },
  });
  return { status: res.status, text: await res.text(), headers: res.headers };
}

/** The cells of an exported file, as a spreadsheet reads them. */
const cellsOf = (text: string): string[][] => parse(text, { bom: true });
/** Cells written back the way the export writes them (byte-order mark, CRLF). */
const fileOf = (cells: string[][]) => stringify(cells, { bom: true, record_delimiter: "windows" });
const versionAt = catalogueColumns.indexOf("version");
/** An exported file with its row checks (the last cell of each row) emptied. */
const withoutChecks = (text: string) => text.replace(/,k[A-Za-z0-9_-]{16}(?=\r\n|$)/g, ",");
const at = (c: Column) => catalogueColumns.indexOf(c);

/** An exported file with its version cells emptied: its discs read as new ones. */
function withoutVersions(text: string): string {
  return fileOf(cellsOf(text).map((r, i) => (i === 0 ? r : r.map((c, j) => (j === versionAt ? "" : c)))));
}

const sha256 = (s: string) => createHash("sha256").update(s, "utf8").digest("hex");

async function discCount(accessionId: string): Promise<number> {
  const r = await testDb
    .selectFrom("discs")
    .select(sql<number>`count(*)::int`.as("n"))
    .where("accession_id", "=", accessionId)
    .executeTakeFirstOrThrow();
  return r.n;
}

async function importEvents(
  sha: string,
): Promise<{ kind: string; subject_id: string | null; payload: Json }[]> {
  return testDb
    .selectFrom("provenance_events")
    .select(["kind", "subject_id", "payload"])
    .where((eb) => eb.or([eb("subject_id", "=", sha), eb(sql`payload->>'importSha256'`, "=", sha)]))
    .orderBy("seq")
    .execute();
}

/** Events about the accession and its discs (the accession is the test's own, so other tests add none). */
async function eventsAbout(accessionId: string): Promise<number> {
  const r = await testDb
    .selectFrom("provenance_events as e")
    .select(sql<number>`count(*)::int`.as("n"))
    .where((eb) =>
      eb.or([
        eb("e.subject_id", "=", accessionId),
        eb(sql`e.payload->'after'->>'accessionId'`, "=", accessionId),
      ]),
    )
    .executeTakeFirstOrThrow();
  return r.n;
}

const base = { format: "shellac_78", speed_rpm: "78", groove: "coarse", cut: "lateral" } as const;

describe("an import with a bad row", () => {
  it("names the row and column, and writes nothing on commit", async () => {
    const acc = await newAccession("BAD");
    const csv = csvOf([
      { ...base, shelf_mark: `B${stamp}-1`, accession: acc.identifier, side: "A", matrix_number: "W 100" },
      { ...base, shelf_mark: `B${stamp}-1`, accession: acc.identifier, side: "B", matrix_number: "W 101" },
      { ...base, shelf_mark: `B${stamp}-2`, accession: acc.identifier, format: "wax_cylinder" },
      { ...base, shelf_mark: `B${stamp}-3`, accession: acc.identifier },
    ]);
    const eventsBefore = await eventsAbout(acc.id);
    expect(eventsBefore).toBe(1); // the accession's own "accession.received"
    const preview = await upload("/api/imports/preview", csv, { cookie: archivist });
    expect(preview.status).toBe(200);
    expect(preview.body.sha256).toBe(sha256(csv));
    expect(preview.body.rows).toBe(4);
    expect(preview.body.errorCount).toBe(1);
    expect(preview.body.errors).toEqual([
      { row: 4, column: "format", message: expect.stringMatching(/Format must be one of/) },
    ]);

    const commit = await upload("/api/imports", csv, {
      cookie: archivist,
      fields: { confirm: "true", sha256: preview.body.sha256 },
    });
    expect(commit.status).toBe(422);
    expect(commit.body.error.details.errors).toEqual(preview.body.errors);
    expect(commit.body.error.message).toMatch(/Nothing was imported/);
    expect(await discCount(acc.id)).toBe(0);
    expect(await importEvents(preview.body.sha256)).toEqual([]);
    expect(await eventsAbout(acc.id)).toBe(eventsBefore);
  });

  it("refuses a commit without confirm, or for a file other than the one previewed", async () => {
    const acc = await newAccession("SHA");
    const csv = csvOf([{ ...base, shelf_mark: `S${stamp}-1`, accession: acc.identifier }]);
    const preview = await upload("/api/imports/preview", csv, { cookie: archivist });
    expect(preview.body.errors).toEqual([]);
    const noConfirm = await upload("/api/imports", csv, {
      cookie: archivist,
      fields: { sha256: preview.body.sha256 },
    });
    expect(noConfirm.status).toBe(422);
    expect(noConfirm.body.error.fields.confirm).toBeDefined();
    const other = csv.replace(`S${stamp}-1`, `S${stamp}-2`);
    const mismatch = await upload("/api/imports", other, {
      cookie: archivist,
      fields: { confirm: "true", sha256: preview.body.sha256 },
    });
    expect(mismatch.status).toBe(409);
    expect(mismatch.body.error.message).toMatch(/SHA-256/);
    expect(await discCount(acc.id)).toBe(0);
  });
});

describe("a clean import", () => {
  it("adds every disc in one go with one import event carrying the file's SHA-256", async () => {
    const acc = await newAccession("OK");
    const csv = csvOf([
      { ...base, shelf_mark: `C${stamp}-1`, side: "A", matrix_number: "W 140", take: "2", title: "Waltz" },
      { ...base, shelf_mark: `C${stamp}-1`, side: "B", matrix_number: "W 141", take: "1", title: "Polka" },
      {
        ...base,
        shelf_mark: `C${stamp}-2`,
        label: "Rillton",
        catalogue_number: "R 12",
        condition: "fair",
        condition_flags: "wear;cracks",
      },
      {
        shelf_mark: `C${stamp}-3`,
        format: "instantaneous_lacquer",
        base: "aluminium",
        speed_rpm: "33 1/3",
        groove: "micro",
        cut: "lateral",
        side: "1",
      },
      {
        shelf_mark: `C${stamp}-3`,
        format: "instantaneous_lacquer",
        base: "aluminium",
        speed_rpm: "33.33",
        groove: "micro",
        cut: "lateral",
        side: "2",
      },
    ]);
    const fields = { defaultAccession: acc.id };
    // The same file as a text/csv body: the preview reads it the same way.
    const asText = await upload("/api/imports/preview", csv, {
      cookie: archivist,
      fields,
      as: "text",
      fileName: "shelf-c.csv",
    });
    expect(asText.status).toBe(200);
    expect(asText.body).toMatchObject({
      sha256: sha256(csv),
      rows: 5,
      discs: 3,
      sides: 4,
      errors: [],
      duplicates: [],
    });
    expect(
      asText.body.toAdd.map((d: { row: number; shelfMark: string; accession: string; sides: string[] }) => [
        d.row,
        d.shelfMark,
        d.accession,
        d.sides,
      ]),
    ).toEqual([
      [2, `C${stamp}-1`, acc.identifier, ["A", "B"]],
      [4, `C${stamp}-2`, acc.identifier, []],
      [5, `C${stamp}-3`, acc.identifier, ["1", "2"]],
    ]);
    expect(await discCount(acc.id)).toBe(0);
    expect(await eventsAbout(acc.id)).toBe(1);

    const done = await importFile(csv, fields, "shelf-c.csv");
    expect(done).toMatchObject({ imported: 3, sides: 4, rows: 5, sha256: sha256(csv) });
    expect(await discCount(acc.id)).toBe(3);
    expect(await eventsAbout(acc.id)).toBe(4);

    const events = await importEvents(done.sha256);
    expect(events.map((e) => e.kind)).toEqual([
      "disc.created",
      "disc.created",
      "disc.created",
      "import.committed",
    ]);
    expect(events.slice(0, 3).map((e) => e.payload.row)).toEqual([2, 4, 5]);
    const committed = events[3];
    expect(committed.subject_id).toBe(done.sha256);
    expect(committed.payload).toMatchObject({
      sha256: done.sha256,
      fileName: "shelf-c.csv",
      rows: 5,
      discs: 3,
      sides: 4,
    });

    const lacquer = await testDb
      .selectFrom("discs")
      .select(["nominal_speed_rpm", "base", "condition_flags"])
      .where("shelf_mark", "=", `C${stamp}-3`)
      .executeTakeFirstOrThrow();
    expect(Number(lacquer.nominal_speed_rpm)).toBe(33.33);
    expect(lacquer.base).toBe("aluminium");
    const second = await testDb
      .selectFrom("discs")
      .select(["condition_flags", "condition_grade", "label_name"])
      .where("shelf_mark", "=", `C${stamp}-2`)
      .executeTakeFirstOrThrow();
    expect(second).toEqual({
      condition_flags: ["wear", "cracks"],
      condition_grade: "fair",
      label_name: "Rillton",
    });
  });
});

describe("duplicate shelf marks", () => {
  it("reports marks already in the catalogue (any case) and marks repeated within the file", async () => {
    const acc = await newAccession("DUP");
    await importFile(csvOf([{ ...base, shelf_mark: `D${stamp}-1`, accession: acc.identifier }]));
    const csv = csvOf([
      { ...base, shelf_mark: `d${stamp}-1`, accession: acc.identifier },
      { ...base, shelf_mark: `D${stamp}-2`, accession: acc.identifier, side: "A" },
      { ...base, shelf_mark: `D${stamp}-3`, accession: acc.identifier },
      { ...base, shelf_mark: `D${stamp}-2`, accession: acc.identifier, side: "B" },
    ]);
    const existing = await testDb
      .selectFrom("discs")
      .select("id")
      .where("shelf_mark", "=", `D${stamp}-1`)
      .executeTakeFirstOrThrow();
    const preview = await upload("/api/imports/preview", csv, { cookie: archivist });
    expect(preview.status).toBe(200);
    expect(preview.body.duplicates).toEqual([
      { row: 2, shelfMark: `d${stamp}-1`, existingDiscId: existing.id },
      { row: 5, shelfMark: `D${stamp}-2`, firstRow: 3 },
    ]);
    // Neither duplicate is a disc to add.
    expect(preview.body.toAdd.map((d: { shelfMark: string }) => d.shelfMark)).toEqual([
      `D${stamp}-2`,
      `D${stamp}-3`,
    ]);
    expect(preview.body.discs).toBe(2);
    expect(preview.body.errors.map((e: { row: number; column: string }) => [e.row, e.column])).toEqual([
      [2, "shelf_mark"],
      [5, "shelf_mark"],
    ]);
    const commit = await upload("/api/imports", csv, {
      cookie: archivist,
      fields: { confirm: "true", sha256: preview.body.sha256 },
    });
    expect(commit.status).toBe(422);
    expect(commit.body.error.details.duplicates).toEqual(preview.body.duplicates);
    expect(await discCount(acc.id)).toBe(1);
  });
});

describe("export and import again", () => {
  it("keeps formula-looking fields exactly, and protects them in the file", async () => {
    const acc = await newAccession("FX");
    const copy = await newAccession("FX2");
    const csv = csvOf([
      {
        ...base,
        shelf_mark: `=F${stamp}-1`,
        accession: acc.identifier,
        label: "@Rillton",
        catalogue_number: "+44 100",
        handling_notes: "-Broken shellac cuts",
        side: "A",
        matrix_number: "=1+2",
        take: "'=already quoted",
        title: "-",
        performers: "+",
        side_notes: '@x, "quoted"\nnext line',
      },
      {
        ...base,
        shelf_mark: `=F${stamp}-1`,
        accession: acc.identifier,
        label: "@Rillton",
        catalogue_number: "+44 100",
        handling_notes: "-Broken shellac cuts",
        side: "B",
        matrix_number: "'-7",
        title: '=HYPERLINK("http://x")',
      },
    ]);
    await importFile(csv);
    const stored = await testDb
      .selectFrom("discs as d")
      .innerJoin("sides as s", "s.disc_id", "d.id")
      .select([
        "d.shelf_mark",
        "d.label_name",
        "d.catalogue_number",
        "d.handling_notes",
        "s.designation",
        "s.matrix_number",
        "s.take",
        "s.title",
        "s.performers",
        "s.notes",
      ])
      .where("d.accession_id", "=", acc.id)
      .orderBy("s.designation")
      .execute();
    // What was typed is stored as text; the importer removed one apostrophe before = + - @.
    expect(stored).toEqual([
      {
        shelf_mark: `=F${stamp}-1`,
        label_name: "@Rillton",
        catalogue_number: "+44 100",
        handling_notes: "-Broken shellac cuts",
        designation: "A",
        matrix_number: "=1+2",
        take: "=already quoted",
        title: "-",
        performers: "+",
        notes: '@x, "quoted"\nnext line',
      },
      {
        shelf_mark: `=F${stamp}-1`,
        label_name: "@Rillton",
        catalogue_number: "+44 100",
        handling_notes: "-Broken shellac cuts",
        designation: "B",
        matrix_number: "-7",
        take: "",
        title: '=HYPERLINK("http://x")',
        performers: "",
        notes: "",
      },
    ]);

    const first = await exportCsv({ accession: acc.id });
    expect(first.status).toBe(200);
    expect(first.headers.get("content-type")).toMatch(/^text\/csv/);
    expect(first.headers.get("content-disposition")).toMatch(
      /attachment; filename="rillbook-catalogue-\d{4}-\d{2}-\d{2}\.csv"/,
    );
    expect(first.text).toContain(`'=F${stamp}-1`);
    expect(first.text).toContain(",'@Rillton,");
    expect(first.text).toContain(`"'=HYPERLINK(""http://x"")"`);
    // No cell of the exported file, as a spreadsheet reads it, starts as a formula.
    const cells = parse(first.text, { bom: true }).flat();
    expect(cells.length).toBeGreaterThan(catalogueColumns.length);
    expect(cells.filter((c) => /^[=+\-@]/.test(c))).toEqual([]);

    // Import the export again under new shelf marks and another accession, export that, compare.
    const again = first.text
      .replaceAll(`=F${stamp}-`, `=G${stamp}-`)
      .replaceAll(acc.identifier, copy.identifier);
    // Under new shelf marks these are new discs: their version cells go (a new disc has none).
    await importFile(withoutVersions(again));
    const second = await exportCsv({ accession: copy.id });
    // The row check covers the shelf mark and the accession too: the new discs have their own.
    expect(withoutChecks(second.text)).toBe(withoutChecks(again));
    expect(second.text).not.toBe(again);
    const read = readCatalogueCsv(second.text);
    expect(checkedVersions(read.rows, read.columns)).toEqual([
      { key: `=g${stamp}-1`.toLowerCase(), version: "1" },
    ]);
  });

  it("exports a filtered view that imports again with every field the same", async () => {
    const acc = await newAccession("VIEW");
    const copy = await newAccession("VIEW2");
    const csv = csvOf([
      {
        shelf_mark: `V${stamp}-1`,
        accession: acc.identifier,
        format: "instantaneous_lacquer",
        base: "glass",
        diameter_in: "16",
        speed_rpm: "33.33",
        groove: "micro",
        cut: "vertical",
        recording_date: "1942-02-03",
        condition: "poor",
        condition_flags: "cracks;residue",
        condition_notes: "Glass base cracked at the label.",
        handling_notes: "Glass base: support from below.",
        side: "1",
        matrix_number: "",
        title: "Talk, part 1",
        performers: "A speaker",
      },
      {
        shelf_mark: `V${stamp}-1`,
        accession: acc.identifier,
        format: "instantaneous_lacquer",
        base: "glass",
        diameter_in: "16",
        speed_rpm: "33.33",
        groove: "micro",
        cut: "vertical",
        recording_date: "1942-02-03",
        condition: "poor",
        condition_flags: "cracks;residue",
        condition_notes: "Glass base cracked at the label.",
        handling_notes: "Glass base: support from below.",
        side: "2",
        title: "Talk, part 2",
        performers: "A speaker",
        side_notes: "Ends early",
      },
      {
        shelf_mark: `V${stamp}-2`,
        accession: acc.identifier,
        format: "instantaneous_lacquer",
        diameter_in: "12.5",
        speed_rpm: "78",
        groove: "coarse",
        cut: "lateral",
        year_from: "1936",
        year_to: "1939",
      },
      {
        ...base,
        shelf_mark: `V${stamp}-3`,
        accession: acc.identifier,
        label: "Rillton",
        catalogue_number: "R 7",
        side: "A",
      },
    ]);
    await importFile(csv);

    const view = await exportCsv(
      { accession: acc.id, format: "instantaneous_lacquer", sort: "-shelfMark" },
      curator,
    );
    expect(view.status).toBe(200);
    const rows = readCatalogueCsv(view.text).rows;
    expect(rows.map((r) => [rowValues(r).shelf_mark, rowValues(r).side])).toEqual([
      [`V${stamp}-2`, ""],
      [`V${stamp}-1`, "1"],
      [`V${stamp}-1`, "2"],
    ]);

    const renamed = view.text
      .replaceAll(`V${stamp}-`, `W${stamp}-`)
      .replaceAll(acc.identifier, copy.identifier);
    await importFile(withoutVersions(renamed));
    const back = readCatalogueCsv(
      (await exportCsv({ accession: copy.id, format: "instantaneous_lacquer", sort: "-shelfMark" })).text,
    ).rows;
    expect(back).toHaveLength(rows.length);
    back.forEach((r, i) => {
      // (The row check covers the shelf mark and accession: the renamed discs have their own.)
      for (const c of catalogueColumns.filter((c) => c !== "row_check")) {
        const expected =
          c === "shelf_mark"
            ? rowValues(rows[i])[c].replace(`V${stamp}-`, `W${stamp}-`)
            : c === "accession"
              ? copy.identifier
              : rowValues(rows[i])[c];
        expect(rowValues(r)[c], `row ${r.row}, ${c}`).toBe(expected);
      }
    });
    expect(rowValues(back[1])).toMatchObject({
      base: "glass",
      diameter_in: "16",
      speed_rpm: "33.33",
      cut: "vertical",
      recording_date: "1942-02-03",
      condition_flags: "cracks;residue",
      title: "Talk, part 1",
    });
    expect(rowValues(back[0])).toMatchObject({
      diameter_in: "12.5",
      year_from: "1936",
      year_to: "1939",
      condition: "unassessed",
    });
  });
});

describe("a disc brought back with its rows as exported", () => {
  it("is only asked whether it is still at its version; the others are read", async () => {
    const acc = await newAccession("CELLS");
    const disc = {
      shelf_mark: `CELLS${stamp}-1`,
      accession: acc.identifier,
      label: 'Rillton, "Deluxe"',
      catalogue_number: "=R 100",
      format: "instantaneous_lacquer",
      base: "aluminium",
      diameter_in: "12.5",
      speed_rpm: "33.33",
      groove: "micro",
      cut: "vertical",
      recording_date: "1941-06-14",
      year_from: "1940",
      year_to: "1941",
      condition: "fair",
      condition_flags: "residue;wear",
      condition_notes: "Lifting at the edge.\nCafé ♫ line two.",
      handling_notes: "+ gloves",
    } as const;
    const csv = csvOf([
      { ...disc, side: "b", title: "Second", performers: "@Rillton band", side_notes: "Ends early" },
      { ...disc, side: "A", matrix_number: "W-1", take: "2", title: "First, part 1" },
      { ...base, shelf_mark: `CELLS${stamp}-2`, accession: acc.identifier, diameter_in: "10" },
      { ...base, shelf_mark: `CELLS${stamp}-3`, accession: acc.identifier, speed_rpm: "16.67", side: "1" },
    ]);
    await importFile(csv);
    const ids = await testDb.selectFrom("discs").select("id").where("accession_id", "=", acc.id).execute();
    const stored = await readDiscs(
      testDb,
      ids.map((r) => r.id),
    );
    expect(stored).toHaveLength(3);
    // Exported and read back untouched: every disc's rows match their check.
    const read = readCatalogueCsv(toCatalogueCsv(stored));
    const keys = [1, 2, 3].map((n) => `cells${stamp}-${n}`.toLowerCase());
    expect(stored.map((d) => d.shelfMark.toLowerCase()).sort()).toEqual(keys);
    expect(checkedVersions(read.rows, read.columns)).toEqual(
      stored.map((d) => ({ key: d.shelfMark.toLowerCase(), version: "1" })),
    );
    const asIs = await readDiscFieldsUnlessAtVersion(
      testDb,
      keys.map((key) => ({ key, version: "1" })),
    );
    expect([...asIs.atVersion].sort()).toEqual([...keys].sort());
    expect(asIs.records).toEqual([]);

    // At another version, with no version (an edited disc), or not catalogued: read in full,
    // the fields as the field-by-field reading gives them.
    const asked = await readDiscFieldsUnlessAtVersion(testDb, [
      { key: keys[0], version: "2" },
      { key: keys[1], version: "" },
      { key: keys[2], version: "1" },
      { key: `cells${stamp}-9`.toLowerCase(), version: "1" },
    ]);
    expect([...asked.atVersion]).toEqual([keys[2]]);
    const byKey = (records: { shelfMark: string }[]) =>
      [...records].sort((a, b) => a.shelfMark.localeCompare(b.shelfMark));
    expect(byKey(asked.records)).toEqual(byKey(await readDiscFieldsByShelfMarks(testDb, keys.slice(0, 2))));
    expect(asked.records.find((r) => r.shelfMark.toLowerCase() === keys[0])).toMatchObject({
      labelName: 'Rillton, "Deluxe"',
      diameterIn: 12.5,
      nominalSpeedRpm: 33.33,
      recordingDate: "1941-06-14",
      conditionFlags: ["residue", "wear"],
      sides: [
        { designation: "A", matrixNumber: "W-1", take: "2", title: "First, part 1" },
        { designation: "b", title: "Second", performers: "@Rillton band", notes: "Ends early" },
      ],
    });
  });
});

describe("the spreadsheet round trip: export, edit, import", () => {
  async function catalogued(tag: string) {
    const acc = await newAccession(tag);
    const m = (n: number) => `${tag}${stamp}-${n}`;
    await importFile(
      csvOf([
        { ...base, shelf_mark: m(1), label: "Rillton", side: "A", matrix_number: "R 1", title: "Reel" },
        { ...base, shelf_mark: m(1), label: "Rillton", side: "B", matrix_number: "R 2", title: "Jig" },
        { ...base, shelf_mark: m(2), side: "A", title: "Lament", performers: "A fiddler" },
        { ...base, shelf_mark: m(3), condition: "good", handling_notes: "Hold by the edge." },
        { ...base, shelf_mark: m(4), side: "A", title: "Air" },
      ]),
      { defaultAccession: acc.id },
    );
    const ids = Object.fromEntries(
      (
        await testDb
          .selectFrom("discs")
          .select(["id", "shelf_mark"])
          .where("accession_id", "=", acc.id)
          .execute()
      ).map((d) => [d.shelf_mark, d.id]),
    );
    return { acc, m, ids };
  }

  it("previews exactly the three changed fields and the new disc, commits them, and exports the edited file", async () => {
    const { acc, m, ids } = await catalogued("RT");
    const exported = await exportCsv({ accession: acc.id });
    expect(exported.status).toBe(200);
    const cells = cellsOf(exported.text);
    expect(cells[0]).toEqual(catalogueColumns);
    expect(cells.slice(1).map((r) => r[versionAt])).toEqual(["1", "1", "1", "1", "1"]);

    // In the spreadsheet: three fields of three discs, and one new disc at the end.
    const rowOf = (mark: string, side: string) =>
      cells.findIndex((r) => r[at("shelf_mark")] === mark && r[at("side")] === side);
    const edited = cells.map((r) => [...r]);
    edited[rowOf(m(1), "A")][at("label")] = "Rillton Records";
    edited[rowOf(m(1), "B")][at("label")] = "Rillton Records";
    edited[rowOf(m(2), "A")][at("title")] = "Lament for the mill";
    edited[rowOf(m(3), "")][at("condition")] = "fair";
    const newRow: Row = {
      ...base,
      shelf_mark: m(5),
      accession: acc.identifier,
      // Filled in as the exported rows are (an empty condition is read as "unassessed").
      condition: "unassessed",
      side: "A",
      title: "New find",
    };
    edited.push(catalogueColumns.map((c) => newRow[c] ?? ""));
    const file = fileOf(edited);

    const preview = await upload("/api/imports/preview", file, { cookie: archivist });
    expect(preview.status, JSON.stringify(preview.body)).toBe(200);
    expect(preview.body).toMatchObject({
      errors: [],
      errorCount: 0,
      conflicts: [],
      conflictCount: 0,
      discs: 1,
      sides: 1,
      updates: 3,
      unchanged: 1,
      separatedBy: "commas",
      clearEmpty: false,
    });
    expect(preview.body.toAdd.map((d: { shelfMark: string }) => d.shelfMark)).toEqual([m(5)]);
    const changes = Object.fromEntries(
      preview.body.toUpdate.map((u: { shelfMark: string; changes: unknown }) => [u.shelfMark, u.changes]),
    );
    expect(changes).toEqual({
      [m(1)]: {
        fields: [{ field: "labelName", column: "label", before: "Rillton", after: "Rillton Records" }],
        sides: [],
      },
      [m(2)]: {
        fields: [],
        sides: [
          {
            designation: "A",
            added: false,
            changes: [{ field: "title", column: "title", before: "Lament", after: "Lament for the mill" }],
          },
        ],
      },
      [m(3)]: {
        fields: [{ field: "conditionGrade", column: "condition", before: "good", after: "fair" }],
        sides: [],
      },
    });
    // The preview wrote nothing.
    const versions = await testDb
      .selectFrom("discs")
      .select(["shelf_mark", "version"])
      .where("accession_id", "=", acc.id)
      .orderBy("shelf_mark")
      .execute();
    expect(versions.map((v) => v.version)).toEqual([1, 1, 1, 1]);

    const done = await upload("/api/imports", file, {
      cookie: archivist,
      fields: { confirm: "true", sha256: preview.body.sha256 },
    });
    expect(done.status, JSON.stringify(done.body)).toBe(201);
    expect(done.body).toMatchObject({ imported: 1, sides: 1, updated: 3 });

    // Each changed disc has its own "disc.edited", as the form's save writes it.
    const events = await importEvents(done.body.sha256);
    expect(events.map((e) => [e.kind, e.subject_id])).toEqual([
      ["disc.created", expect.any(String)],
      ["disc.edited", ids[m(1)]],
      ["disc.edited", ids[m(2)]],
      ["disc.edited", ids[m(3)]],
      ["import.committed", done.body.sha256],
    ]);
    expect(events[1].payload).toMatchObject({
      changed: ["labelName"],
      before: { labelName: "Rillton" },
      after: { labelName: "Rillton Records" },
    });
    expect(events[2].payload.changed).toEqual(["sides"]);
    expect(events[2].payload.after.sides[0]).toMatchObject({
      designation: "A",
      title: "Lament for the mill",
    });
    expect(events[3].payload).toMatchObject({
      changed: ["conditionGrade"],
      before: { conditionGrade: "good" },
      after: { conditionGrade: "fair" },
    });
    expect(events[4].payload).toMatchObject({ discs: 1, updated: 3 });

    // Exported again: the edited file, with the new versions (the new disc is at version 1)
    // and the new discs' and edited discs' new row checks; the untouched disc keeps its own.
    const again = await exportCsv({ accession: acc.id });
    const againCells = cellsOf(again.text);
    const checkOf = (mark: string) => againCells.find((r) => r[at("shelf_mark")] === mark)![at("row_check")];
    const changed = [m(1), m(2), m(3), m(5)];
    for (const mark of changed.slice(0, 3))
      expect(checkOf(mark)).not.toBe(cells[rowOf(mark, mark === m(3) ? "" : "A")][at("row_check")]);
    const expected = edited.map((r, i) => {
      if (i === 0) return r;
      const mark = r[at("shelf_mark")];
      const v = mark === m(5) ? "1" : [m(1), m(2), m(3)].includes(mark) ? "2" : "1";
      return r.map((c, j) =>
        j === versionAt ? v : j === at("row_check") && changed.includes(mark) ? checkOf(mark) : c,
      );
    });
    // (fetch's text() drops the byte-order mark the file starts with.)
    expect(again.text).toBe(fileOf(expected).replace(/^\uFEFF/, ""));
    // Those checks are right: read back, every disc's rows match them, at its new version.
    const reread = readCatalogueCsv(again.text);
    expect(checkedVersions(reread.rows, reread.columns)).toEqual(
      [m(1), m(2), m(3), m(4), m(5)].map((mark) => ({
        key: mark.toLowerCase(),
        version: [m(1), m(2), m(3)].includes(mark) ? "2" : "1",
      })),
    );
  });

  it("reports a disc saved since the export as a conflict naming who changed what, and writes nothing", async () => {
    const { acc, m, ids } = await catalogued("CF");
    const exported = cellsOf((await exportCsv({ accession: acc.id })).text);

    // Someone else edits the first disc in Rillbook after the export.
    const current = await api(`/api/discs/${ids[m(1)]}`, { cookie: admin });
    expect(current.status).toBe(200);
    const { sides, ...fields } = current.body.disc as { sides: Record<string, unknown>[] };
    const saved = await api(`/api/discs/${ids[m(1)]}`, {
      cookie: admin,
      method: "PATCH",
      body: {
        ...fields,
        catalogueNumber: "RX 9",
        sides: sides.map((x) => ({
          id: x.id,
          designation: x.designation,
          matrixNumber: x.matrixNumber,
          take: x.take,
          title: x.title,
          performers: x.performers,
          notes: x.notes,
        })),
      },
    });
    expect(saved.status, JSON.stringify(saved.body)).toBe(200);

    const edited = exported.map((r) => [...r]);
    for (const r of edited) if (r[at("shelf_mark")] === m(1)) r[at("label")] = "Overwritten";
    for (const r of edited) if (r[at("shelf_mark")] === m(2)) r[at("title")] = "Changed too";
    const file = fileOf(edited);
    const preview = await upload("/api/imports/preview", file, { cookie: archivist });
    expect(preview.status).toBe(200);
    expect(preview.body.conflictCount).toBe(1);
    expect(preview.body.conflicts).toEqual([
      {
        row: 2,
        discId: ids[m(1)],
        shelfMark: m(1),
        exportedVersion: 1,
        currentVersion: 2,
        edits: [{ by: account("admin").name, at: expect.any(String), changed: ["catalogueNumber"] }],
      },
    ]);
    expect(preview.body.updates).toBe(1);

    const commit = await upload("/api/imports", file, {
      cookie: archivist,
      fields: { confirm: "true", sha256: preview.body.sha256 },
    });
    expect(commit.status).toBe(422);
    expect(commit.body.error.message).toMatch(/1 disc changed in Rillbook since the export/);
    expect(commit.body.error.details.conflicts).toEqual(preview.body.conflicts);
    const after = await testDb
      .selectFrom("discs")
      .select(["shelf_mark", "label_name", "catalogue_number", "version"])
      .where("accession_id", "=", acc.id)
      .orderBy("shelf_mark")
      .execute();
    expect(after.slice(0, 2)).toEqual([
      { shelf_mark: m(1), label_name: "Rillton", catalogue_number: "RX 9", version: 2 },
      { shelf_mark: m(2), label_name: "", catalogue_number: "", version: 1 },
    ]);
    expect(await importEvents(preview.body.sha256)).toEqual([]);
  });

  it("leaves a field whose cell is emptied as it is, unless asked to clear it", async () => {
    const { acc, m } = await catalogued("CE");
    const edited = cellsOf((await exportCsv({ accession: acc.id })).text);
    for (const r of edited)
      if (r[at("shelf_mark")] === m(3)) {
        r[at("handling_notes")] = "";
        r[at("condition")] = "";
      }
    // A row that names only its shelf mark, version and one changed cell.
    const sparse = edited.find((r) => r[at("shelf_mark")] === m(4))!;
    for (const c of catalogueColumns)
      if (!["shelf_mark", "version", "side", "performers"].includes(c)) sparse[at(c)] = "";
    sparse[at("performers")] = "A piper";
    const file = fileOf(edited);

    const kept = await upload("/api/imports/preview", file, { cookie: archivist });
    expect(kept.body).toMatchObject({ errorCount: 0, updates: 1, unchanged: 3 });
    expect(kept.body.toUpdate[0].changes.sides[0].changes).toEqual([
      { field: "performers", column: "performers", before: "", after: "A piper" },
    ]);

    const cleared = await upload("/api/imports/preview", file, {
      cookie: archivist,
      fields: { clearEmpty: "true" },
    });
    expect(cleared.body.errorCount, JSON.stringify(cleared.body.errors)).toBe(0);
    expect(cleared.body.clearEmpty).toBe(true);
    const third = cleared.body.toUpdate.find((u: { shelfMark: string }) => u.shelfMark === m(3));
    expect(third.changes.fields).toEqual([
      { field: "conditionGrade", column: "condition", before: "good", after: "unassessed" },
      { field: "handlingNotes", column: "handling_notes", before: "Hold by the edge.", after: "" },
    ]);
    // The accession and the required columns stay; the side's title is cleared.
    const fourth = cleared.body.toUpdate.find((u: { shelfMark: string }) => u.shelfMark === m(4));
    expect(fourth.changes.fields).toEqual([]);
    expect(fourth.changes.sides[0].changes.map((c: { field: string }) => c.field)).toEqual([
      "title",
      "performers",
    ]);

    const done = await upload("/api/imports", file, {
      cookie: archivist,
      fields: { clearEmpty: "true", confirm: "true", sha256: cleared.body.sha256 },
    });
    expect(done.status, JSON.stringify(done.body)).toBe(201);
    const third3 = await testDb
      .selectFrom("discs")
      .select(["handling_notes", "condition_grade", "format"])
      .where("shelf_mark", "=", m(3))
      .executeTakeFirstOrThrow();
    expect(third3).toEqual({ handling_notes: "", condition_grade: "unassessed", format: "shellac_78" });
  });

  it("refuses a row that names a catalogued shelf mark without a version, and a version without a disc", async () => {
    const { acc, m } = await catalogued("NV");
    const csv = csvOf([
      { ...base, shelf_mark: m(2), accession: acc.identifier, side: "A", title: "Other" },
      { ...base, shelf_mark: `${m(2)}-renamed`, accession: acc.identifier, version: "1" },
    ]);
    const preview = await upload("/api/imports/preview", csv, { cookie: archivist });
    expect(preview.body.errors).toEqual([
      { row: 2, column: "shelf_mark", message: expect.stringMatching(/already in the catalogue.*version/) },
      {
        row: 3,
        column: "version",
        message: expect.stringMatching(/No disc in the catalogue has the shelf mark/),
      },
    ]);
  });
});

describe("files a spreadsheet saves", () => {
  it("reads semicolon- and tab-separated files", async () => {
    const acc = await newAccession("SEP");
    for (const [sep, name] of [
      [";", "semicolons"],
      ["\t", "tabs"],
    ] as const) {
      const text =
        [
          "shelf_mark;accession;format;speed_rpm;groove;cut;label".replaceAll(";", sep),
          [`S${stamp}-${name}`, acc.identifier, "shellac_78", "78", "coarse", "lateral", "Rillton, Ltd"].join(
            sep,
          ),
        ].join("\r\n") + "\r\n";
      const preview = await upload("/api/imports/preview", text, { cookie: archivist });
      expect(preview.status).toBe(200);
      expect(preview.body).toMatchObject({ separatedBy: name, errors: [], discs: 1 });
      expect(preview.body.toAdd[0]).toMatchObject({
        shelfMark: `S${stamp}-${name}`,
        labelName: "Rillton, Ltd",
      });
    }
  });

  it("says an empty file is empty, and names the line of a Latin-1 byte", async () => {
    const empty = await upload("/api/imports/preview", "", { cookie: archivist });
    expect(empty.status).toBe(422);
    expect(empty.body.error.message).toBe("The file is empty (0 bytes).");
    const latin1 = Buffer.from(`shelf_mark,format\r\nX-1,shellac_78\r\nCaf\xe9,shellac_78\r\n`, "latin1");
    const res = await fetch(`${appUrl}/api/imports/preview`, {
      method: "POST",
      headers: { ...sameOrigin, cookie: archivist, "content-type": "text/csv" },
      body: latin1,
    });
    expect(res.status).toBe(422);
    const body = (await res.json()) as { error: { message: string } };
    expect(body.error.message).toMatch(/not UTF-8 text \(line 3 holds the first such byte\).*CSV UTF-8/);
  });
});

describe("who may import", () => {
  it("lets an archivist preview and refuses a curator", async () => {
    const csv = csvOf([{ ...base, shelf_mark: `P${stamp}-1`, accession: "nobody" }]);
    const mine = await upload("/api/imports/preview", csv, { cookie: archivist });
    expect(mine.status).toBe(200);
    expect(mine.body.errors).toEqual([expect.objectContaining({ row: 2, column: "accession" })]);
    const theirs = await upload("/api/imports/preview", csv, { cookie: curator });
    expect(theirs.status).toBe(403);
    const commit = await upload("/api/imports", csv, {
      cookie: curator,
      fields: { confirm: "true", sha256: mine.body.sha256 },
    });
    expect(commit.status).toBe(403);
    const visitor = await api("/api/imports/preview", { method: "POST", body: {} });
    expect(visitor.status).toBe(401);
  });
});
