// The render lease: a worker running a render names itself in renders.lease_owner and
// renews renders.heartbeat_at every few seconds. A render in 'running' whose lease is
// older than the stale limit belonged to a worker that died (killed, out of memory, its
// machine lost): any worker's sweep hands it back to the queue, and the bench shows it as
// stalled. No framework imports: the worker and the web app both read it.
import { randomBytes } from "node:crypto";
import { promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { type Kysely, sql } from "kysely";
import { z } from "zod";
import type { Database } from "../../db/types";

const seconds = (fallback: number) => z.coerce.number().int().min(1).max(86_400).default(fallback);

const leaseSchema = z.object({
  /** How often the running render renews its lease. */
  RENDER_HEARTBEAT_SECONDS: seconds(10),
  /** A lease not renewed for this long is stale: its worker is gone. */
  RENDER_LEASE_STALE_SECONDS: seconds(90),
  /** How often each worker looks for stale leases. */
  RENDER_SWEEP_SECONDS: seconds(30),
});

export type LeaseTimes = z.infer<typeof leaseSchema>;

export function leaseTimes(source: Record<string, string | undefined> = process.env): LeaseTimes {
  return leaseSchema.parse({
    RENDER_HEARTBEAT_SECONDS: source.RENDER_HEARTBEAT_SECONDS,
    RENDER_LEASE_STALE_SECONDS: source.RENDER_LEASE_STALE_SECONDS,
    RENDER_SWEEP_SECONDS: source.RENDER_SWEEP_SECONDS,
  });
}

/** This process's name as a lease holder: host, PID and a random part (PIDs are reused). */
export const workerIdentity = `${os.hostname()}:${process.pid}:${randomBytes(4).toString("hex")}`;

/** True when a running render's lease (or, before any heartbeat, its start) is older than the stale limit. */
export function leaseIsStale(
  r: { status: string; heartbeatAt: Date | string | null; startedAt: Date | string | null },
  now = Date.now(),
  staleSeconds = leaseTimes().RENDER_LEASE_STALE_SECONDS,
): boolean {
  if (r.status !== "running") return false;
  const last = r.heartbeatAt ?? r.startedAt;
  if (!last) return false;
  return now - new Date(last).getTime() > staleSeconds * 1000;
}

/**
 * Hands every render whose lease is stale back to the queue: status 'queued', no owner.
 * Answers their ids so the caller sends each to the render queue again. The update is
 * conditional on the lease still being stale, so two workers sweeping at once hand each
 * render back once.
 */
export async function releaseStaleRenders(db: Kysely<Database>, staleSeconds: number): Promise<string[]> {
  const rows = await db
    .updateTable("renders")
    .set({
      status: "queued",
      lease_owner: null,
      heartbeat_at: null,
      progress: 0,
      error: "The worker running this render stopped; it was handed back to the queue.",
    })
    .where("status", "=", "running")
    .where(
      sql<boolean>`coalesce(heartbeat_at, started_at, created_at) < now() - make_interval(secs => ${staleSeconds})`,
    )
    .returning("id")
    .execute();
  return rows.map((r) => r.id);
}

/** Where a render's access copy is stored: the server's own key, the same on every attempt. */
export function accessCopyKey(sideId: string, renderId: string): string {
  return `access/${sideId}/${renderId}.wav`;
}

/** The prefix of a render's temporary folder: names the worker's PID, so a later worker knows whose it was. */
export function renderTmpPrefix(pid = process.pid): string {
  return `rillbook-render-${pid}-`;
}

function processAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    // EPERM: it exists, under another user.
    return (err as NodeJS.ErrnoException).code === "EPERM";
  }
}

/**
 * Removes the temporary folders of renders that a killed worker could not clean up (the
 * job removes its own in `finally`): those of a worker process that no longer runs, and
 * any not written to for `olderThanMs` (a folder of another machine's worker sharing the
 * folder, or of a PID since reused). A render running in another worker keeps its own.
 */
export async function removeStaleRenderTmp(olderThanMs = 3600_000, now = Date.now()): Promise<string[]> {
  const removed: string[] = [];
  const dir = os.tmpdir();
  for (const name of await fs.readdir(dir).catch(() => [] as string[])) {
    if (!name.startsWith("rillbook-render-")) continue;
    const full = path.join(dir, name);
    try {
      const pid = Number(/^rillbook-render-(\d+)-/.exec(name)?.[1]);
      const ownerGone = Number.isInteger(pid) && pid > 0 && pid !== process.pid && !processAlive(pid);
      if (!ownerGone) {
        // The newest of the folder and what it holds: a long render keeps writing its file.
        let newest = (await fs.stat(full)).mtimeMs;
        for (const f of await fs.readdir(full))
          newest = Math.max(
            newest,
            (await fs.stat(path.join(full, f)).catch(() => ({ mtimeMs: 0 }))).mtimeMs,
          );
        if (now - newest < olderThanMs) continue;
      }
      await fs.rm(full, { recursive: true, force: true });
      removed.push(full);
    } catch {
      /* gone already */
    }
  }
  return removed;
}
