import PgBoss from "pg-boss";

/** The queues of long work, run by worker processes (scripts/worker.ts). */
export const RENDER_QUEUE = "render";

/** One job per stored object to re-read; the sweep queues them on the admin's cycle. */
export const FIXITY_QUEUE = "fixity-check";
export const FIXITY_SWEEP_QUEUE = "fixity-sweep";
/** The sweep runs every hour and queues what has come due. */
export const FIXITY_SWEEP_CRON = "7 * * * *";

/** Retries for renders: a crashed or failed attempt is tried twice more, a minute apart. */
export const renderQueuePolicy = { name: RENDER_QUEUE, retryLimit: 2, retryDelay: 60, expireInSeconds: 6 * 3600 } as const;

/**
 * A pg-boss instance on the app's database. Workers supervise and maintain the queue;
 * the web tier only sends jobs (inside its own transactions).
 */
export function createBoss(databaseUrl: string, role: "worker" | "web" | "migrate"): PgBoss {
  const boss = new PgBoss({
    connectionString: databaseUrl,
    max: role === "worker" ? 4 : 2,
    supervise: role === "worker",
    schedule: role === "worker",
    migrate: role !== "web",
  });
  boss.on("error", (err) => console.error(`[jobs] ${role}:`, err));
  return boss;
}

/** Creates any of the lab's queues that do not exist yet (a started instance). */
export async function createMissingQueues(boss: PgBoss): Promise<void> {
  if (!(await boss.getQueue(RENDER_QUEUE))) await boss.createQueue(RENDER_QUEUE, { ...renderQueuePolicy });
  if (!(await boss.getQueue(FIXITY_QUEUE))) await boss.createQueue(FIXITY_QUEUE, { name: FIXITY_QUEUE, retryLimit: 2, retryDelay: 60, expireInSeconds: 6 * 3600 });
  if (!(await boss.getQueue(FIXITY_SWEEP_QUEUE))) await boss.createQueue(FIXITY_SWEEP_QUEUE, { name: FIXITY_SWEEP_QUEUE, retryLimit: 0, expireInSeconds: 3600 });
}

/** Creates pg-boss's schema and the lab's queues (run with the migrations). */
export async function ensureQueues(databaseUrl: string): Promise<void> {
  const boss = createBoss(databaseUrl, "migrate");
  await boss.start();
  try {
    await createMissingQueues(boss);
  } finally {
    await boss.stop({ graceful: false });
  }
}
