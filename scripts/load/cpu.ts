// CPU time of the lab's own processes on this machine (Linux /proc), so a run can say how
// much processor each request cost the app and the database: a figure that holds up better
// than latency when other work shares the cores.
import { existsSync, readdirSync, readFileSync } from "node:fs";
import path from "node:path";

const ticksPerSecond = 100; // USER_HZ on Linux

/** The lab's processes by group: the roots are read from the profile's PID files. */
export interface ProcessGroups {
  app?: number;
  worker?: number;
  database?: number;
  bucket?: number;
}

export function processGroups(profileDir: string): ProcessGroups {
  const read = (file: string): number | undefined => {
    const p = path.join(profileDir, file);
    if (!existsSync(p)) return undefined;
    const pid = Number(readFileSync(p, "utf8").split("\n")[0].trim());
    return Number.isInteger(pid) && pid > 0 && existsSync(`/proc/${pid}`) ? pid : undefined;
  };
  return {
    app: read("run/app.pid"),
    worker: read("run/worker.pid"),
    database: read("pg/postmaster.pid"),
    bucket: read("run/s3rver.pid"),
  };
}

interface Proc {
  ppid: number;
  ticks: number;
}

function allProcesses(): Map<number, Proc> {
  const out = new Map<number, Proc>();
  for (const name of readdirSync("/proc")) {
    if (!/^\d+$/.test(name)) continue;
    try {
      const stat = readFileSync(`/proc/${name}/stat`, "utf8");
      // The command name is in parentheses and may hold spaces: the fields start after the last ')'.
      const f = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
      // f[1] = ppid (field 4); f[11], f[12] = utime, stime (fields 14, 15).
      out.set(Number(name), { ppid: Number(f[1]), ticks: Number(f[11]) + Number(f[12]) });
    } catch {
      /* the process ended while we looked */
    }
  }
  return out;
}

/** CPU ticks per process, for each group's root and everything under it. */
export function cpuSnapshot(groups: ProcessGroups): Map<string, Map<number, number>> {
  const procs = allProcesses();
  const children = new Map<number, number[]>();
  for (const [pid, p] of procs) {
    const list = children.get(p.ppid);
    if (list) list.push(pid);
    else children.set(p.ppid, [pid]);
  }
  const out = new Map<string, Map<number, number>>();
  for (const [group, root] of Object.entries(groups) as [string, number | undefined][]) {
    if (root === undefined) continue;
    const ticks = new Map<number, number>();
    const stack = [root];
    while (stack.length) {
      const pid = stack.pop()!;
      const p = procs.get(pid);
      if (!p) continue;
      ticks.set(pid, p.ticks);
      stack.push(...(children.get(pid) ?? []));
    }
    out.set(group, ticks);
  }
  return out;
}

/** CPU seconds each group used between two snapshots (a process that started in between counts from zero). */
export function cpuSecondsBetween(
  before: Map<string, Map<number, number>>,
  after: Map<string, Map<number, number>>,
): Record<string, number> {
  const out: Record<string, number> = {};
  for (const [group, now] of after) {
    const then = before.get(group) ?? new Map<number, number>();
    let ticks = 0;
    for (const [pid, t] of now) ticks += t - (then.get(pid) ?? 0);
    out[group] = ticks / ticksPerSecond;
  }
  return out;
}
