import { type Kysely, sql } from "kysely";
import type { Database } from "./types";

/**
 * Rillbook's two database roles.
 *
 * - The owner runs the migrations and owns every table, sequence, function and type
 *   (and pg-boss's schema). Only it can alter a table or switch a trigger off.
 * - The app's role is what the web app, the worker and the seed connect as
 *   (DATABASE_URL). It is not a superuser and owns nothing; it may read and write rows,
 *   never TRUNCATE, and never UPDATE or DELETE a row of an append-only table.
 *
 * `grantAppRole` runs after every migration run (scripts/migrate.ts), so it also
 * covers tables added by later migrations; default privileges cover tables created
 * between two runs. The README's "Production" section has the same as plain SQL.
 */

/** Append-only tables: the app may insert and read, never change or remove a row. */
export const appendOnlyTables = [
  "provenance_events",
  "curve_preset_versions",
  "chain_checkpoints",
  "chain_checks",
  "curve_choices",
  "reviews",
  "sign_in_attempts",
] as const;

/** Rules the migrations write and the app only reads (the side lifecycle's steps). */
export const readOnlyTables = ["side_transitions"] as const;

/** The migrator's own bookkeeping: none of the app's business. */
const migratorTables = ["kysely_migration", "kysely_migration_lock"];

export const pgBossSchema = "pgboss";

const ident = (name: string) => sql.id(name);

/** The role a connection URL names (its user name), decoded. */
export function roleOf(url: string): string {
  const user = decodeURIComponent(new URL(url).username);
  if (!user) throw new Error("the database URL names no user");
  return user;
}

/**
 * Tables whose rows are guarded by a trigger refusing UPDATE or DELETE (a function named
 * refuse_*: the convention of the provenance log and the preset versions). A later
 * migration that makes a table append-only that way is covered without a list to edit.
 */
async function guardedTables(db: Kysely<Database>): Promise<string[]> {
  const { rows } = await sql<{ table: string }>`
    SELECT DISTINCT c.relname AS table
    FROM pg_trigger t
    JOIN pg_class c ON c.oid = t.tgrelid
    JOIN pg_namespace n ON n.oid = c.relnamespace
    JOIN pg_proc p ON p.oid = t.tgfoid
    WHERE n.nspname = 'public' AND NOT t.tgisinternal AND p.proname LIKE 'refuse\\_%'
      AND (t.tgtype & (8 | 16)) <> 0`.execute(db);
  return rows.map((r) => r.table);
}

async function tableExists(db: Kysely<Database>, schema: string, table: string): Promise<boolean> {
  const { rows } = await sql<{
    ok: boolean;
  }>`SELECT to_regclass(${`${schema}.${table}`}) IS NOT NULL AS ok`.execute(db);
  return rows[0]?.ok ?? false;
}

async function schemaExists(db: Kysely<Database>, schema: string): Promise<boolean> {
  const { rows } = await sql<{
    ok: boolean;
  }>`SELECT EXISTS (SELECT 1 FROM pg_namespace WHERE nspname = ${schema}) AS ok`.execute(db);
  return rows[0]?.ok ?? false;
}

/**
 * Gives the app's role exactly what it needs, run as the owner after the migrations.
 * Idempotent. Answers the append-only tables it withheld changes from.
 */
export async function grantAppRole(db: Kysely<Database>, appRole: string): Promise<string[]> {
  const { rows } = await sql<{
    owner: string;
    database: string;
  }>`SELECT current_user AS owner, current_database() AS database`.execute(db);
  const { owner, database } = rows[0];
  if (owner === appRole)
    throw new Error(`the app's role (${appRole}) must not be the role that runs migrations`);
  const app = ident(appRole);
  const own = ident(owner);

  await sql`GRANT CONNECT ON DATABASE ${ident(database)} TO ${app}`.execute(db);
  // PostgreSQL 15 already keeps PUBLIC from creating in public; older servers did not. (A warning, not an error, for a role that does not own the schema.)
  await sql`REVOKE CREATE ON SCHEMA public FROM PUBLIC`.execute(db);
  await sql`GRANT USAGE ON SCHEMA public TO ${app}`.execute(db);
  await sql`GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA public TO ${app}`.execute(db);
  await sql`REVOKE TRUNCATE, REFERENCES, TRIGGER ON ALL TABLES IN SCHEMA public FROM ${app}`.execute(db);
  await sql`GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO ${app}`.execute(db);
  // Tables a later migration creates get the same rights without waiting for this step.
  await sql`ALTER DEFAULT PRIVILEGES FOR ROLE ${own} IN SCHEMA public GRANT SELECT, INSERT, UPDATE, DELETE ON TABLES TO ${app}`.execute(
    db,
  );
  await sql`ALTER DEFAULT PRIVILEGES FOR ROLE ${own} IN SCHEMA public GRANT USAGE, SELECT ON SEQUENCES TO ${app}`.execute(
    db,
  );

  for (const t of migratorTables) {
    if (await tableExists(db, "public", t))
      await sql`REVOKE ALL ON TABLE ${ident(t)} FROM ${app}, PUBLIC`.execute(db);
  }

  for (const t of readOnlyTables) {
    if (await tableExists(db, "public", t))
      await sql`REVOKE INSERT, UPDATE, DELETE, TRUNCATE ON TABLE ${ident(t)} FROM ${app}, PUBLIC`.execute(db);
  }

  const appendOnly = [...new Set([...appendOnlyTables, ...(await guardedTables(db))])].sort();
  const withheld: string[] = [];
  for (const t of appendOnly) {
    if (!(await tableExists(db, "public", t))) continue;
    await sql`REVOKE UPDATE, DELETE, TRUNCATE ON TABLE ${ident(t)} FROM ${app}, PUBLIC`.execute(db);
    withheld.push(t);
  }

  // pg-boss's schema is created and migrated by the owner (scripts/migrate.ts); the app
  // only works its queues. New queue partitions are created by the owner too.
  if (await schemaExists(db, pgBossSchema)) {
    const boss = ident(pgBossSchema);
    await sql`GRANT USAGE ON SCHEMA ${boss} TO ${app}`.execute(db);
    await sql`GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA ${boss} TO ${app}`.execute(db);
    await sql`GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA ${boss} TO ${app}`.execute(db);
    await sql`ALTER DEFAULT PRIVILEGES FOR ROLE ${own} IN SCHEMA ${boss} GRANT SELECT, INSERT, UPDATE, DELETE ON TABLES TO ${app}`.execute(
      db,
    );
    await sql`ALTER DEFAULT PRIVILEGES FOR ROLE ${own} IN SCHEMA ${boss} GRANT USAGE, SELECT ON SEQUENCES TO ${app}`.execute(
      db,
    );
  }
  return withheld;
}

/**
 * Run by a superuser on an existing database: hands every object in the database's own
 * schemas (not extensions' members) to the owner role. Used to upgrade a cluster whose
 * objects a single superuser created. REASSIGN OWNED cannot do this for the bootstrap
 * superuser, so each object is altered in turn.
 */
export const reassignOwnershipSql = (owner: string) => `
DO $$
DECLARE
  r record;
  target text := ${quoteLiteral(owner)};
BEGIN
  FOR r IN
    SELECT n.nspname FROM pg_namespace n
    WHERE n.nspname NOT IN ('pg_catalog', 'information_schema', 'public') AND n.nspname NOT LIKE 'pg\\_%'
      AND pg_get_userbyid(n.nspowner) <> target
      AND NOT EXISTS (SELECT 1 FROM pg_depend d WHERE d.classid = 'pg_namespace'::regclass AND d.objid = n.oid AND d.deptype = 'e')
  LOOP
    EXECUTE format('ALTER SCHEMA %I OWNER TO %I', r.nspname, target);
  END LOOP;

  FOR r IN
    SELECT c.oid::regclass AS rel FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
    WHERE n.nspname NOT IN ('pg_catalog', 'information_schema') AND n.nspname NOT LIKE 'pg\\_%'
      AND c.relkind IN ('r', 'p', 'v', 'm', 'f') AND pg_get_userbyid(c.relowner) <> target
      AND NOT EXISTS (SELECT 1 FROM pg_depend d WHERE d.classid = 'pg_class'::regclass AND d.objid = c.oid AND d.deptype = 'e')
      AND NOT c.relispartition
  LOOP
    EXECUTE format('ALTER TABLE %s OWNER TO %I', r.rel, target);
  END LOOP;

  -- Partitions after their parents (a partition's owner may differ from its parent's).
  FOR r IN
    SELECT c.oid::regclass AS rel FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
    WHERE n.nspname NOT IN ('pg_catalog', 'information_schema') AND n.nspname NOT LIKE 'pg\\_%'
      AND c.relispartition AND c.relkind IN ('r', 'p') AND pg_get_userbyid(c.relowner) <> target
  LOOP
    EXECUTE format('ALTER TABLE %s OWNER TO %I', r.rel, target);
  END LOOP;

  -- Sequences that belong to no column (a column's sequence follows its table).
  FOR r IN
    SELECT c.oid::regclass AS rel FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
    WHERE n.nspname NOT IN ('pg_catalog', 'information_schema') AND n.nspname NOT LIKE 'pg\\_%'
      AND c.relkind = 'S' AND pg_get_userbyid(c.relowner) <> target
      AND NOT EXISTS (SELECT 1 FROM pg_depend d WHERE d.classid = 'pg_class'::regclass AND d.objid = c.oid AND d.deptype IN ('a', 'i', 'e'))
  LOOP
    EXECUTE format('ALTER SEQUENCE %s OWNER TO %I', r.rel, target);
  END LOOP;

  FOR r IN
    SELECT p.oid::regprocedure AS fn FROM pg_proc p JOIN pg_namespace n ON n.oid = p.pronamespace
    WHERE n.nspname NOT IN ('pg_catalog', 'information_schema') AND n.nspname NOT LIKE 'pg\\_%'
      AND pg_get_userbyid(p.proowner) <> target
      AND NOT EXISTS (SELECT 1 FROM pg_depend d WHERE d.classid = 'pg_proc'::regclass AND d.objid = p.oid AND d.deptype = 'e')
  LOOP
    EXECUTE format('ALTER ROUTINE %s OWNER TO %I', r.fn, target);
  END LOOP;

  -- Enums and domains (a table's row type follows the table).
  FOR r IN
    SELECT t.oid::regtype AS ty FROM pg_type t JOIN pg_namespace n ON n.oid = t.typnamespace
    WHERE n.nspname NOT IN ('pg_catalog', 'information_schema') AND n.nspname NOT LIKE 'pg\\_%'
      AND t.typtype IN ('e', 'd') AND pg_get_userbyid(t.typowner) <> target
      AND NOT EXISTS (SELECT 1 FROM pg_depend d WHERE d.classid = 'pg_type'::regclass AND d.objid = t.oid AND d.deptype = 'e')
  LOOP
    EXECUTE format('ALTER TYPE %s OWNER TO %I', r.ty, target);
  END LOOP;
END $$`;

function quoteLiteral(s: string): string {
  return `'${s.replace(/'/g, "''")}'`;
}

export function quoteIdent(s: string): string {
  return `"${s.replace(/"/g, '""')}"`;
}
