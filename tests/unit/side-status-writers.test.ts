// One writer of a side's status: lib/sides/lifecycle.ts. This test reads the source of
// the app, the libraries, the worker, the scripts and the seed, and fails on any other
// module that writes sides.status or what a side stands on (its current transfer, curve
// choice and render), through Kysely or in SQL.
import { promises as fs } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");
const folders = ["app", "lib", "components", "hooks", "db", "scripts"];
const owner = path.join("lib", "sides");
// The catalogue benchmark builds a synthetic database of its own (never the lab's) and
// hands a tenth of its sides out in one statement, along the lifecycle's first step.
const exempt = new Set([path.join("scripts", "bench", "catalogue.ts")]);
const guarded = /\b(status|current_transfer_id|current_curve_choice_id|current_render_id)\b/;

async function sourceFiles(dir: string): Promise<string[]> {
  const out: string[] = [];
  for (const entry of await fs.readdir(path.join(root, dir), { withFileTypes: true }).catch(() => [])) {
    const rel = path.join(dir, entry.name);
    if (entry.isDirectory()) out.push(...(await sourceFiles(rel)));
    else if (/\.(ts|tsx|mjs|js)$/.test(entry.name)) out.push(rel);
  }
  return out;
}

/** Each write to the sides table in a source text, with what it sets. */
export function sideWrites(text: string): string[] {
  const found: string[] = [];
  // Kysely: from updateTable("sides") / insertInto("sides") to the end of that statement.
  for (const m of text.matchAll(/\.(updateTable|insertInto)\(\s*["'`]sides(?:\s+as\s+\w+)?["'`]\s*\)/g)) {
    const rest = text.slice(m.index);
    const end = rest.search(/\.execute(TakeFirst(OrThrow)?)?\(/);
    const statement = rest.slice(0, end === -1 ? 600 : end);
    const setPart = (statement.match(/\.(set|values)\(([\s\S]*)$/)?.[2] ?? "").split(
      /\.(where|returning|onConflict)\(/,
    )[0];
    if (guarded.test(setPart)) found.push(statement.replace(/\s+/g, " ").slice(0, 160));
  }
  // SQL: UPDATE sides … SET … status, and INSERT INTO sides (… status …).
  for (const m of text.matchAll(/UPDATE\s+sides\b[\s\S]{0,400}?SET([\s\S]{0,400}?)(WHERE|;|`)/gi)) {
    if (guarded.test(m[1])) found.push(m[0].replace(/\s+/g, " ").slice(0, 160));
  }
  for (const m of text.matchAll(/INSERT\s+INTO\s+sides\s*\(([^)]*)\)/gi)) {
    if (guarded.test(m[1])) found.push(m[0].replace(/\s+/g, " ").slice(0, 160));
  }
  return found;
}

describe("who writes a side's status", () => {
  it("the detector finds writes in every form it looks for, and passes over others", () => {
    expect(
      sideWrites(
        `await trx.updateTable("sides").set({ status: "approved" }).where("id", "=", id).execute();`,
      ),
    ).toHaveLength(1);
    expect(
      sideWrites(`await db.updateTable("sides as s").set({ current_render_id: null }).execute()`),
    ).toHaveLength(1);
    expect(
      sideWrites(
        `await trx.insertInto("sides").values({ disc_id, designation, status: "rendered" }).execute()`,
      ),
    ).toHaveLength(1);
    expect(
      sideWrites("await sql`UPDATE sides SET status = 'approved' WHERE id = ${id}`.execute(db)"),
    ).toHaveLength(1);
    expect(sideWrites("INSERT INTO sides (disc_id, status) VALUES ($1, $2)")).toHaveLength(1);
    expect(
      sideWrites(
        `await trx.updateTable("sides").set({ title: "Blue Hour", version: 3 }).where("status", "=", "assigned").execute()`,
      ),
    ).toHaveLength(0);
    expect(sideWrites(`await trx.updateTable("renders").set({ status: "done" }).execute()`)).toHaveLength(0);
  });

  it("only lib/sides writes sides.status and the side's current transfer, curve choice and render", async () => {
    const files = (await Promise.all(folders.map(sourceFiles))).flat();
    expect(files.length).toBeGreaterThan(100);
    const offenders: string[] = [];
    for (const file of files) {
      if (file.startsWith(owner + path.sep) || exempt.has(file)) continue;
      for (const w of sideWrites(await fs.readFile(path.join(root, file), "utf8")))
        offenders.push(`${file}: ${w}`);
    }
    expect(offenders).toEqual([]);
    // …and lib/sides does write them (so the rule is about something real).
    const lifecycle = await fs.readFile(path.join(root, owner, "lifecycle.ts"), "utf8");
    expect(lifecycle).toMatch(/updateTable\("sides"\)/);
  });
});
