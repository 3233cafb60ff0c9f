import { Kysely, PostgresDialect } from "kysely";
import pg from "pg";
import type { Database } from "./types";

// BIGINT counts come back as strings by default; every count we keep fits a double.
pg.types.setTypeParser(20, (v) => Number(v));
// Calendar dates stay "YYYY-MM-DD" text: a Date would shift them by the server's time zone.
pg.types.setTypeParser(1082, (v) => v);

/**
 * Builds a Kysely instance. The app uses the single instance in db/index.ts; scripts,
 * the worker and tests (which run outside Next.js) call this with their own URL.
 */
export function createDb(databaseUrl: string, max = 10): Kysely<Database> {
  const pool = new pg.Pool({ connectionString: databaseUrl, max });
  // An idle client whose server went away (a restart's "terminating connection due to
  // administrator command") is reported here; without a listener Node would end the
  // process. The pool drops that client and makes a new one on the next query.
  pool.on("error", (err) =>
    console.error(`[db] an idle connection was lost (the pool reconnects on the next query): ${err.message}`),
  );
  // The same for a client that is checked out but between queries (inside a transaction) when
  // the server goes away: its query then fails, and the pool drops it when it comes back.
  pool.on("connect", (client) =>
    client.on("error", (err) =>
      console.error(`[db] a connection in use was lost (its work fails and is retried): ${err.message}`),
    ),
  );
  return new Kysely<Database>({ dialect: new PostgresDialect({ pool }) });
}
