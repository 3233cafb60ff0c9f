import "./lib/demo-env";
import { promises as fs } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { type Migration, type MigrationProvider, Migrator } from "kysely";
import { createDb } from "../db/client";
import { grantAppRole, roleOf } from "../db/roles";
import { env } from "../lib/env";
import { ensureQueues } from "../lib/jobs/boss";

const migrationFolder = path.join(path.dirname(fileURLToPath(import.meta.url)), "..", "migrations");

/**
 * The migrations folder, each file named as Kysely's file provider names it (without its
 * extension). Imported from here rather than from inside Kysely so that whatever loads
 * this script's TypeScript (tsx, or vitest in the tests) loads the migrations too.
 */
export const migrationProvider: MigrationProvider = {
  async getMigrations(): Promise<Record<string, Migration>> {
    const files = (await fs.readdir(migrationFolder))
      .filter((f) => /\.(ts|mts|js|mjs)$/.test(f) && !f.endsWith(".d.ts"))
      .sort();
    const migrations: Record<string, Migration> = {};
    for (const f of files)
      migrations[f.replace(/\.[^.]+$/, "")] = (await import(path.join(migrationFolder, f))) as Migration;
    return migrations;
  },
};

export interface MigrateOptions {
  /** The owner role's connection: runs the migrations and owns what they create. */
  ownerUrl: string;
  /** The app's connection URL: its role is granted what the app needs. Omitted or the same role: no grants. */
  appUrl?: string;
}

/**
 * Runs every pending Kysely migration and pg-boss's own schema migration as the owner,
 * then grants the app's role its rights (db/roles.ts). Returns the names applied.
 */
export async function migrateToLatest(
  opts: MigrateOptions,
): Promise<{ applied: string[]; appendOnly: string[] | null }> {
  const db = createDb(opts.ownerUrl, 2);
  try {
    const migrator = new Migrator({ db, provider: migrationProvider });
    const { error, results } = await migrator.migrateToLatest();
    const failed = results?.find((r) => r.status === "Error");
    if (error || failed) {
      throw new Error(`migration ${failed?.migrationName ?? ""} failed: ${String(error)}`);
    }
    await ensureQueues(opts.ownerUrl);
    let appendOnly: string[] | null = null;
    if (opts.appUrl && roleOf(opts.appUrl) !== roleOf(opts.ownerUrl))
      appendOnly = await grantAppRole(db, roleOf(opts.appUrl));
    return { applied: (results ?? []).map((r) => r.migrationName), appendOnly };
  } finally {
    await db.destroy();
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === path.resolve(process.argv[1])) {
  const { DATABASE_URL, DATABASE_OWNER_URL } = env();
  if (!DATABASE_OWNER_URL) {
    console.warn(
      "DATABASE_OWNER_URL is not set: migrating as DATABASE_URL's role, which then owns " +
        "the tables and could switch off the provenance log's guards. Set up the two roles " +
        '(README, "Database roles").',
    );
  }
  migrateToLatest({ ownerUrl: DATABASE_OWNER_URL ?? DATABASE_URL, appUrl: DATABASE_URL })
    .then(({ applied, appendOnly }) => {
      console.log(applied.length ? `migrated: ${applied.join(", ")}` : "database is up to date");
      if (appendOnly)
        console.log(
          `granted ${roleOf(DATABASE_URL)} its rights; append-only for it: ${appendOnly.join(", ")}`,
        );
    })
    .catch((err) => {
      console.error(String(err));
      process.exit(1);
    });
}
