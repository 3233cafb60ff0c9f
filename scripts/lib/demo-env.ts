// Lets a script run on its own (`npm run db:migrate`, `npm run worker`, `npm run curve`…)
// against the demo's private PostgreSQL: when no DATABASE_URL is given and the demo
// cluster has been set up, its role URLs (with the passwords made for it, kept in
// storage/demo/db-roles.json) are put in the environment before lib/env reads it.
// Imported first by those scripts; does nothing when the environment names a database.
import path from "node:path";
import { fileURLToPath } from "node:url";
import { demoPgPort, localRoleUrls, readRoleSecrets } from "./local-roles";

if (!process.env.DATABASE_URL && !process.env.RILLBOOK_PROFILE) {
  const demoDir = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..", "storage", "demo");
  const secrets = readRoleSecrets(demoDir);
  if (secrets) {
    const urls = localRoleUrls(demoPgPort, secrets);
    process.env.DATABASE_URL = urls.app;
    process.env.DATABASE_OWNER_URL ??= urls.owner;
  }
}
