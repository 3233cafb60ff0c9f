import PgBoss from "pg-boss";

/** The queues of long work, run by worker processes (scripts/worker.ts). */
export const RENDER_QUEUE = "render";

/** One job per stored object to re-read; the sweep queues them on the admin's cycle. */
export const FIXITY_QUEUE = "fixity-check";
export const FIXITY_SWEEP_QUEUE = "fixity-sweep";
/** Fixity checks a worker takes at each fetch: a check of a small object is quick, and pg-boss fetches once a second. */
export const FIXITY_BATCH = 10;
/** The sweep runs every hour and queues what has come due. */
export const FIXITY_SWEEP_CRON = "7 * * * *";

/** Checkpoints of the provenance chain: daily, and whenever a curator or an admin asks. */
export const CHAIN_CHECKPOINT_QUEUE = "chain-checkpoint";
export const CHAIN_CHECKPOINT_CRON = "23 2 * * *";

/** Renders and fixity checks: a crashed or failed attempt is tried twice more, a minute apart. */
const retried = { retryLimit: 2, retryDelay: 60, expireInSeconds: 6 * 3600 };

const queues: PgBoss.Queue[] = [
  { name: RENDER_QUEUE, ...retried },
  { name: FIXITY_QUEUE, ...retried },
  { name: FIXITY_SWEEP_QUEUE, retryLimit: 0, expireInSeconds: 3600 },
  { name: CHAIN_CHECKPOINT_QUEUE, retryLimit: 2, retryDelay: 300, expireInSeconds: 3600 },
  // pg-boss's own queue for cron schedules: made here, by the owner, because the worker's
  // role cannot create a queue's table when pg-boss's scheduler asks for it.
  { name: "__pgboss__send-it" },
];

/** One fixity job per object at a time, whether the sweep or a curator queued it. */
export function fixityJobKey(o: { kind: string; id: string }): string {
  return `${o.kind}:${o.id}`;
}

/**
 * A pg-boss instance on the app's database. Workers supervise and maintain the queue;
 * the web tier only sends jobs (inside its own transactions). Only the migration run
 * (as the owner role) creates or migrates pg-boss's schema and its queues: the app's
 * role owns nothing and cannot, and refuses to start on an out-of-date schema.
 */
export function createBoss(databaseUrl: string, role: "worker" | "web" | "migrate"): PgBoss {
  const boss = new PgBoss({
    connectionString: databaseUrl,
    max: role === "worker" ? 4 : 2,
    supervise: role === "worker",
    schedule: role === "worker",
    migrate: role === "migrate",
  });
  boss.on("error", (err) => console.error(`[jobs] ${role}:`, err));
  return boss;
}

/** Creates any of the lab's queues that do not exist yet (a started instance). */
export async function createMissingQueues(boss: PgBoss): Promise<void> {
  for (const q of queues) if (!(await boss.getQueue(q.name))) await boss.createQueue(q.name, q);
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
