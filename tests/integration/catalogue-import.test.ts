// Importing and exporting the catalogue as CSV, against the running test app and its
// database: previews write nothing, a bad file writes nothing, a clean file goes in as
// one transaction with one import event, and export → import gives back the same discs.
import { createHash } from "node:crypto";
import { parse } from "csv-parse/sync";
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/db/seed-data";
import { catalogueColumns, readCatalogueCsv } from "@/lib/catalogue/csv-format";
import { api, appUrl, type Json, sameOrigin, signInCookie } from "../support/app";
import { testDb } from "../support/db";

let archivist: string;
let curator: string;
const stamp = `${Date.now().toString(36)}${Math.random().toString(36).slice(2, 6)}`.toUpperCase();

function account(role: string) {
  return demoAccounts.find((a) => a.role === role)!;
}

beforeAll(async () => {
  archivist = await signInCookie(account("archivist").email, account("archivist").password);
  curator = await signInCookie(account("curator").email, account("curator").password);
});

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
    expect(commit.body.errors).toEqual(preview.body.errors);
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
    expect(commit.body.duplicates).toEqual(preview.body.duplicates);
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
    await importFile(again);
    const second = await exportCsv({ accession: copy.id });
    expect(second.text).toBe(again);
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
    expect(rows.map((r) => [r.values.shelf_mark, r.values.side])).toEqual([
      [`V${stamp}-2`, ""],
      [`V${stamp}-1`, "1"],
      [`V${stamp}-1`, "2"],
    ]);

    const renamed = view.text
      .replaceAll(`V${stamp}-`, `W${stamp}-`)
      .replaceAll(acc.identifier, copy.identifier);
    await importFile(renamed);
    const back = readCatalogueCsv(
      (await exportCsv({ accession: copy.id, format: "instantaneous_lacquer", sort: "-shelfMark" })).text,
    ).rows;
    expect(back).toHaveLength(rows.length);
    back.forEach((r, i) => {
      for (const c of catalogueColumns) {
        const expected =
          c === "shelf_mark"
            ? rows[i].values[c].replace(`V${stamp}-`, `W${stamp}-`)
            : c === "accession"
              ? copy.identifier
              : rows[i].values[c];
        expect(r.values[c], `row ${r.row}, ${c}`).toBe(expected);
      }
    });
    expect(back[1].values).toMatchObject({
      base: "glass",
      diameter_in: "16",
      speed_rpm: "33.33",
      cut: "vertical",
      recording_date: "1942-02-03",
      condition_flags: "cracks;residue",
      title: "Talk, part 1",
    });
    expect(back[0].values).toMatchObject({
      diameter_in: "12.5",
      year_from: "1936",
      year_to: "1939",
      condition: "unassessed",
    });
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
