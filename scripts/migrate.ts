import { promises as fs } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { FileMigrationProvider, Migrator } from "kysely";
import { createDb } from "../db/client";
import { env } from "../lib/env";
import { ensureQueues } from "../lib/jobs/boss";

const migrationFolder = path.join(path.dirname(fileURLToPath(import.meta.url)), "..", "migrations");

/** Runs every pending Kysely migration; returns the names applied. Throws on failure. */
export async function migrateToLatest(databaseUrl: string): Promise<string[]> {
  const db = createDb(databaseUrl, 2);
  try {
    const migrator = new Migrator({
      db,
      provider: new FileMigrationProvider({ fs, path, migrationFolder }),
    });
    const { error, results } = await migrator.migrateToLatest();
    const failed = results?.find((r) => r.status === "Error");
    if (error || failed) {
      throw new Error(`migration ${failed?.migrationName ?? ""} failed: ${String(error)}`);
    }
    await ensureQueues(databaseUrl);
    return (results ?? []).map((r) => r.migrationName);
  } finally {
    await db.destroy();
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === path.resolve(process.argv[1])) {
  migrateToLatest(env().DATABASE_URL)
    .then((applied) => {
      console.log(applied.length ? `migrated: ${applied.join(", ")}` : "database is up to date");
    })
    .catch((err) => {
      console.error(String(err));
      process.exit(1);
    });
}
