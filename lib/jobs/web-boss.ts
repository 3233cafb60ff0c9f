import "server-only";
import type PgBoss from "pg-boss";
import type { Transaction } from "kysely";
import { CompiledQuery } from "kysely";
import type { Database } from "../../db/types";
import { env } from "../env";
import { createBoss } from "./boss";

const holder = globalThis as unknown as { rillbookBoss?: Promise<PgBoss> };

/** The web tier's pg-boss: started once per process, only to send jobs. */
function boss(): Promise<PgBoss> {
  holder.rillbookBoss ??= (async () => {
    const b = createBoss(env().DATABASE_URL, "web");
    await b.start();
    return b;
  })();
  return holder.rillbookBoss;
}

/** Queues a job inside the caller's transaction: the job exists exactly when the change that asked for it does. */
export async function sendInTransaction(
  trx: Transaction<Database>,
  queue: string,
  data: object,
  options: PgBoss.SendOptions = {},
): Promise<string> {
  const b = await boss();
  const id = await b.send(queue, data, {
    ...options,
    db: {
      executeSql: async (text: string, values: unknown[]) => {
        const r = await trx.executeQuery(CompiledQuery.raw(text, values));
        return { rows: r.rows };
      },
    },
  });
  if (!id) throw new Error(`the ${queue} queue did not accept the job`);
  return id;
}

/** Queues a job outside any transaction (e.g. a fixity check somebody asked for now). */
export async function sendJob(
  queue: string,
  data: object,
  options: PgBoss.SendOptions = {},
): Promise<string | null> {
  return (await boss()).send(queue, data, options);
}
