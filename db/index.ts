import "server-only";
import type { Kysely } from "kysely";
import { env } from "../lib/env";
import { createDb } from "./client";
import type { Database } from "./types";

// One pool per server process; kept on globalThis so dev-mode reloads do not leak pools.
const holder = globalThis as unknown as { rillbookDb?: Kysely<Database> };

export const db: Kysely<Database> = holder.rillbookDb ?? createDb(env().DATABASE_URL);
holder.rillbookDb = db;
