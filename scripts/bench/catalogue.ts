// Catalogue list and search speed on a large lab: builds a benchmark database of
// BENCH_DISCS discs (100 000 by default; about 1.9 sides each) beside the demo database on
// the same server, runs the catalogue's own list queries (lib/catalogue/list-query.ts)
// many times, and prints p50/p95/p99 server time per query and the plan of the slowest one.
//   npm run bench:catalogue            (the demo services must be running: npm start)
//   BENCH_DISCS=1000000 npm run bench:catalogue
//   BENCH_REUSE=1 …  keeps a benchmark database of that size from an earlier run (only
//                    migrates it), so a second measurement does not rebuild a million discs.
//   BENCH_PG_PORT=56600 …  needs no demo services: starts (or reuses) a PostgreSQL cluster of
//                    its own in storage/bench on that port and leaves it running for the next
//                    run; BENCH_PG_STOP=1 stops it once the measurement is done.
import "../lib/demo-env";
import os from "node:os";
import path from "node:path";
import { performance } from "node:perf_hooks";
import { sql } from "kysely";
import pg from "pg";
import { createDb } from "../../db/client";
import type { ExportDisc } from "../../lib/catalogue/csv-format";
import { cappedCountQuery, filteredDiscs, listDiscsWith, listOrdering } from "../../lib/catalogue/list-query";
import { discListQuerySchema } from "../../lib/validation/catalogue";
import { env } from "../../lib/env";
import { migrateToLatest } from "../migrate";
import { localRoleUrls, readRoleSecrets } from "../lib/local-roles";
import { type Profile, profiles, root, startPostgres, stopPostgres } from "../lib/stack";

const discCount = Number(process.env.BENCH_DISCS ?? 100_000);
const runs = Number(process.env.BENCH_RUNS ?? 60);
const reuse = process.env.BENCH_REUSE === "1";
const ownPgPort = process.env.BENCH_PG_PORT ? Number(process.env.BENCH_PG_PORT) : null;
const benchName = "rillbook_bench";
/** BENCH_ONLY=preview measures only the cases whose names hold that text. */
const only = process.env.BENCH_ONLY?.toLowerCase();

/** The benchmark's own cluster (BENCH_PG_PORT): the test profile's settings, its own folder and port. */
function ownCluster(port: number): Profile {
  return { ...profiles.test, pgPort: port, dir: path.join(root, "storage", "bench") };
}

/** The owner role's URL, which builds and fills the side database (each local cluster gives it CREATEDB). */
async function ownerBase(): Promise<URL> {
  if (ownPgPort === null) return new URL(env().DATABASE_OWNER_URL ?? env().DATABASE_URL);
  if (!Number.isInteger(ownPgPort) || ownPgPort < 1024 || ownPgPort > 65535)
    throw new Error(`BENCH_PG_PORT must be a port number, not "${process.env.BENCH_PG_PORT}"`);
  const cluster = ownCluster(ownPgPort);
  await startPostgres(cluster);
  const secrets = readRoleSecrets(cluster.dir);
  if (!secrets) throw new Error(`no database roles recorded in ${cluster.dir}`);
  return new URL(localRoleUrls(ownPgPort, secrets).owner);
}

let base: URL;

/** A fresh benchmark database; or, with BENCH_REUSE=1, the one left by a run of the same size. */
async function prepareDatabase(): Promise<{ url: string; build: boolean }> {
  const url = Object.assign(new URL(base), { pathname: `/${benchName}` }).toString();
  const admin = new pg.Client({
    connectionString: Object.assign(new URL(base), { pathname: "/postgres" }).toString(),
  });
  await admin.connect();
  try {
    if (reuse) {
      const exists = await admin.query(`SELECT 1 FROM pg_database WHERE datname = $1`, [benchName]);
      if (exists.rowCount) {
        const bench = new pg.Client({ connectionString: url });
        await bench.connect();
        const n = await bench
          .query<{ n: number }>(`SELECT count(*)::int n FROM discs`)
          .catch(() => ({ rows: [{ n: -1 }] }));
        await bench.end();
        if (n.rows[0].n === discCount) return { url, build: false };
      }
    }
    await admin.query(`DROP DATABASE IF EXISTS ${benchName}`);
    await admin.query(`CREATE DATABASE ${benchName}`);
    return { url, build: true };
  } finally {
    await admin.end();
  }
}

async function main(): Promise<void> {
  base = await ownerBase();
  const { url, build } = await prepareDatabase();
  await migrateToLatest({ ownerUrl: url });
  const db = createDb(url, 4);
  if (build) await fill(db);
  else {
    await sql`ANALYZE`.execute(db);
    console.log(`reusing the benchmark database of ${discCount} discs`);
  }
  await measure(db);
  await db.destroy();
  if (ownPgPort !== null && process.env.BENCH_PG_STOP === "1") await stopPostgres(ownCluster(ownPgPort));
}

async function fill(db: ReturnType<typeof createDb>): Promise<void> {
  const t0 = performance.now();
  await sql`
    INSERT INTO accessions (identifier, source, received_on)
    SELECT 'BENCH-' || g, 'benchmark shelf ' || g, date '2020-01-01' + g FROM generate_series(1, 50) g`.execute(
    db,
  );
  const labels = [
    "Brindlecord",
    "Quellstone",
    "Varrowby",
    "Ashgrove Phonic",
    "Oxley & Vane",
    "Tarnwell",
    "Pellory",
    "Cindermoor Transcriptions",
    "Fenlow Recording Service",
    "Larkspur Microgroove",
  ];
  const words = [
    "Lantern",
    "Harbour",
    "Meadow",
    "Winter",
    "River",
    "Evening",
    "Copper",
    "Blue",
    "Orchard",
    "Moonlit",
    "Willow",
    "Northern",
    "Candle",
    "Garden",
  ];
  const names = [
    "Carrow",
    "Dunmore",
    "Ellery",
    "Farrant",
    "Gilby",
    "Hesketh",
    "Jessop",
    "Kettle",
    "Lanyon",
    "Marl",
    "Norcott",
    "Pennock",
    "Quarrie",
    "Selby",
  ];
  await sql`
    INSERT INTO discs (accession_id, shelf_mark, label_name, catalogue_number, format, nominal_speed_rpm,
                       groove, cut, recorded_from_year, recorded_to_year, condition_grade)
    SELECT acc.ids[1 + g % 50],
           'BX-' || lpad(g::text, 7, '0'),
           (${labels}::text[])[1 + g % 10],
           upper(substr((${labels}::text[])[1 + g % 10], 1, 2)) || ' ' || (1000 + (g::bigint * 7919) % 90000),
           (ARRAY['shellac_78','instantaneous_lacquer','transcription','vinyl_78','microgroove_lp','other'])[1 + (g::bigint * 31) % 6],
           (ARRAY[78, 80, 33.33, 45])[1 + (g::bigint * 17) % 4],
           'coarse', 'lateral', 1900 + g % 60, 1900 + g % 60,
           (ARRAY['excellent','good','fair','poor'])[1 + g % 4]
    FROM generate_series(1, ${discCount}) g,
         (SELECT array_agg(id ORDER BY identifier) ids FROM accessions) acc`.execute(db);
  await sql`
    INSERT INTO sides (disc_id, designation, matrix_number, take, title, performers)
    SELECT d.id, s.designation,
           chr(65 + (h % 26)) || (10000 + (h % 89999)) || '-' || s.designation,
           (1 + h % 4)::text,
           (${words}::text[])[1 + h % 14] || ' ' || (${words}::text[])[1 + (h / 14) % 14] || ' Song',
           (${names}::text[])[1 + h % 14] || ' and the ' || (${names}::text[])[1 + (h / 7) % 14] || ' Quartet'
    FROM discs d CROSS JOIN (VALUES ('A'), ('B')) s(designation)
    CROSS JOIN LATERAL (SELECT (abs(hashtext(d.shelf_mark || s.designation)::bigint) % 2147483647)::int AS h) hh
    WHERE s.designation = 'A' OR hashtext(d.shelf_mark) % 10 <> 0`.execute(db);
  // A tenth of the sides handed out, so a status filter selects a tenth as in a working lab.
  // (Every side starts catalogued, and the database allows only the lifecycle's steps:
  // catalogued → assigned is the one step that needs no transfer, curve or render.)
  await sql`UPDATE sides SET status = 'assigned' WHERE abs(hashtext(id::text)::bigint) % 10 = 0`.execute(db);
  // The same search columns the app keeps, built in one statement.
  await sql`
    UPDATE discs d SET
      search_tsv = to_tsvector('simple', d.label_name || ' ' || d.catalogue_number || ' ' || coalesce(s.words, '')),
      search_codes = lower(d.shelf_mark || ' ' || d.catalogue_number || ' ' || coalesce(s.codes, '')),
      first_title = nullif(s.first_title, '')
    FROM (SELECT disc_id, string_agg(title || ' ' || performers || ' ' || matrix_number, ' ') words, string_agg(matrix_number, ' ') codes,
                 (array_agg(title ORDER BY lower(designation)))[1] first_title
          FROM sides GROUP BY disc_id) s
    WHERE d.id = s.disc_id`.execute(db);
  // That update wrote every disc a second time: compact the table as a catalogue that grew
  // disc by disc would be (half of it is otherwise dead space a scan walks through), then
  // mark it all-visible and gather its statistics.
  await sql`VACUUM (FULL) discs`.execute(db);
  await sql`VACUUM ANALYZE`.execute(db);
  const counts = await sql<{
    discs: number;
    sides: number;
  }>`SELECT (SELECT count(*)::int FROM discs) discs, (SELECT count(*)::int FROM sides) sides`.execute(db);
  console.log(
    `built ${counts.rows[0].discs} discs, ${counts.rows[0].sides} sides in ${((performance.now() - t0) / 1000).toFixed(1)} s`,
  );
}

async function measure(db: ReturnType<typeof createDb>): Promise<void> {
  const sideCount = (await sql<{ n: number }>`SELECT count(*)::int n FROM sides`.execute(db)).rows[0].n;

  const someAccession = (
    await db.selectFrom("accessions").select("id").limit(1).offset(7).executeTakeFirstOrThrow()
  ).id;
  const sample = await db
    .selectFrom("sides")
    .select("matrix_number")
    .limit(1)
    .offset(12345 % sideCount)
    .executeTakeFirstOrThrow();
  const queries: Record<string, Record<string, unknown>> = {
    "first page, by shelf mark": {},
    "page 40, newest first": { sort: "-updatedAt", page: 40 },
    "filter format + speed": { format: "instantaneous_lacquer", speed: 78 },
    "filter status assigned": { status: "assigned", sort: "labelName" },
    "filter status in review": { status: "in_review" },
    "filter engineer (none assigned)": { engineer: "00000000-0000-4000-8000-000000000000" },
    "sort by title": { sort: "title" },
    "sort by recording year, newest": { sort: "-year" },
    "filter speed, by title, page 5": { speed: 45, sort: "-title", page: 5 },
    "filter accession": { accession: someAccession },
    "search a word (title/performer)": { q: "harbour" },
    "search two words": { q: "willow carrow" },
    "search catalogue number part": { q: "QU 41" },
    "search matrix number": { q: sample.matrix_number },
    "search + filter + sort": { q: "lantern", format: "shellac_78", sort: "-catalogueNumber" },
  };
  const previewName = `update-import preview, ${importRows} rows`;
  const wanted = (name: string) => !only || name.toLowerCase().includes(only);
  const cases: [string, () => Promise<unknown>][] = Object.entries(queries)
    .filter(([name]) => wanted(name))
    .map(([name, query]) => [name, () => listDiscsWith(db, query)]);
  if (wanted(previewName)) cases.push([previewName, await importPreview(db)]);
  if (!cases.length) throw new Error(`BENCH_ONLY="${only}" names none of the measured cases`);
  const results: { name: string; p50: number; p95: number; p99: number; max: number; cpu: number }[] = [];
  console.log(`load before measuring (uptime): ${loadAverage()}`);
  for (const [name, call] of cases) {
    await call(); // warm
    const cpuBefore = process.cpuUsage();
    const times: number[] = [];
    for (let i = 0; i < runs; i++) {
      const t = performance.now();
      await call();
      times.push(performance.now() - t);
    }
    const cpu = process.cpuUsage(cpuBefore);
    times.sort((a, b) => a - b);
    const at = (p: number) => times[Math.min(times.length - 1, Math.floor(p * times.length))];
    // This process's CPU time per call (its garbage collection included; PostgreSQL's not).
    const cpuMs = (cpu.user + cpu.system) / 1000 / runs;
    results.push({
      name,
      p50: at(0.5),
      p95: at(0.95),
      p99: at(0.99),
      max: times[times.length - 1],
      cpu: cpuMs,
    });
  }
  console.log(`load after measuring (uptime): ${loadAverage()}`);
  console.log(
    `\n${runs} runs each (time = the whole list call: rows, count and sides, as the API does it;\n` +
      "cpu = this process's CPU time per call, its garbage collection included, PostgreSQL's not)\n",
  );
  console.log(
    `${"query".padEnd(34)} ${"p50 ms".padStart(8)} ${"p95 ms".padStart(8)} ${"p99 ms".padStart(8)} ${"cpu ms".padStart(8)}`,
  );
  for (const r of results)
    console.log(
      `${r.name.padEnd(34)} ${r.p50.toFixed(2).padStart(8)} ${r.p95.toFixed(2).padStart(8)} ${r.p99.toFixed(2).padStart(8)} ${r.cpu.toFixed(2).padStart(8)}`,
    );
  const slowest = results.reduce((a, b) => (b.p95 > a.p95 ? b : a));
  console.log(
    `\nslowest by p95: ${slowest.name} (${slowest.p95.toFixed(2)} ms); goal p95 < 50 ms: ${results.every((r) => r.p95 < 50) ? "met" : "NOT met"}`,
  );

  // The plans of the slowest list query's row fetch and count, as PostgreSQL runs them.
  const lists = results.filter((r) => r.name in queries);
  if (!lists.length) return;
  const slowestList = lists.reduce((a, b) => (b.p95 > a.p95 ? b : a));
  const q = discListQuerySchema.parse(queries[slowestList.name]);
  const { column, modifiers } = listOrdering(q);
  const rowsQuery = filteredDiscs(db, q)
    .select(["d.id", "d.shelf_mark"])
    .orderBy(column, modifiers)
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
    .compile();
  const countQuery = cappedCountQuery(db, q).compile();
  for (const [what, compiled] of [
    ["rows", rowsQuery],
    ["count", countQuery],
  ] as const) {
    const plan = await sql
      .raw<{ "QUERY PLAN": string }>(
        `EXPLAIN (ANALYZE, BUFFERS) ${compiled.sql.replace(/\$(\d+)/g, (_, n) => literal(compiled.parameters[Number(n) - 1]))}`,
      )
      .execute(db);
    console.log(`\nplan of "${slowestList.name}", ${what}:`);
    for (const row of plan.rows) console.log(`  ${row["QUERY PLAN"]}`);
  }
}

/** The machine's load average over 1, 5 and 15 minutes, as `uptime` prints it, with its cores. */
function loadAverage(): string {
  return `${os
    .loadavg()
    .map((l) => l.toFixed(2))
    .join(", ")} on ${os.cpus().length} cores`;
}

/** Rows of the spreadsheet the update-import preview is measured with. */
const importRows = 2_000;

/**
 * The update-import preview as the route makes it (lib/catalogue/csv.ts's previewImport):
 * an export of catalogued discs, 2 000 rows, edited as a person edits it in a spreadsheet
 * (a condition grade on every tenth disc, a side's title on every fifteenth), read back.
 */
async function importPreview(db: ReturnType<typeof createDb>): Promise<() => Promise<unknown>> {
  // The app's pool is the benchmark database's (db/index.ts keeps one on globalThis).
  (globalThis as unknown as { rillbookDb?: typeof db }).rillbookDb = db;
  const { previewImport } = await import("../../lib/catalogue/csv");
  const { catalogueColumns, toCatalogueCsv } = await import("../../lib/catalogue/csv-format");
  const { readDiscs } = await import("../../lib/catalogue/records");
  const { parse } = await import("csv-parse/sync");
  const { stringify } = await import("csv-stringify/sync");
  const ids = await db
    .selectFrom("discs")
    .select("id")
    .orderBy("shelf_mark")
    .offset(Math.floor(discCount / 2))
    .limit(importRows)
    .execute();
  const discs: ExportDisc[] = [];
  let rows = 0;
  for (const d of await readDiscs(
    db,
    ids.map((r) => r.id),
  )) {
    const n = Math.max(1, d.sides.length);
    if (rows + n > importRows) break;
    rows += n;
    discs.push(d);
  }
  // The export, edited cell by cell: the i-th disc's condition when i is a multiple of 10,
  // its first row's title (when it has a side) when i is a multiple of 15.
  const cells: string[][] = parse(toCatalogueCsv(discs), { bom: true });
  const at = (c: string) => catalogueColumns.indexOf(c as (typeof catalogueColumns)[number]);
  let disc = -1;
  for (let r = 1; r < cells.length; r++) {
    const first = r === 1 || cells[r][at("shelf_mark")] !== cells[r - 1][at("shelf_mark")];
    if (first) disc++;
    if (disc % 10 === 0) cells[r][at("condition")] = cells[r][at("condition")] === "poor" ? "fair" : "poor";
    if (disc % 15 === 0 && first && cells[r][at("side")] !== "") cells[r][at("title")] += " (retitled)";
  }
  const upload = {
    bytes: new TextEncoder().encode(stringify(cells, { bom: true, record_delimiter: "windows" })),
    fields: {},
  };
  const report = await previewImport(upload);
  if (
    report.rows !== rows ||
    report.errorCount ||
    report.conflictCount ||
    report.updates !==
      Math.ceil(discs.length / 10) + Math.ceil(discs.length / 15) - Math.ceil(discs.length / 30)
  )
    throw new Error(
      `the import preview did not read the edited export as expected: ${JSON.stringify({ ...report, toUpdate: report.toUpdate.length })}`,
    );
  console.log(`update-import preview: ${rows} rows, ${discs.length} discs, ${report.updates} with changes`);
  return () => previewImport(upload);
}

function literal(v: unknown): string {
  if (typeof v === "number") return String(v);
  return `'${String(v).replace(/'/g, "''")}'`;
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
