// The fault drills' hands on processes. The test profile's own (scripts/lib/stack.ts keeps
// their PIDs in storage/test/run/): read a PID, see whether it lives, kill s3rver and start it
// again on the same port and data folder. And extra processes a drill starts beside them (a
// second worker, a second app on a restored database): each in its own process group, its
// output in storage/test/logs/<name>.log, and stopped by its PID at the end of the drill.
import { type ChildProcess, spawn } from "node:child_process";
import { promises as fs, openSync } from "node:fs";
import path from "node:path";
import { expect } from "vitest";
import { alive, pidFile, portOpen, profile, root, stackEnv, startS3rver } from "@/scripts/lib/stack";

export { alive };

export const testProfile = profile("test");

export async function readPidFile(file: string): Promise<number> {
  const pid = Number((await fs.readFile(file, "utf8")).trim());
  expect(Number.isInteger(pid) && pid > 0).toBe(true);
  return pid;
}

export interface StartedProcess {
  name: string;
  pid: number;
  logFile: string;
  /** The output so far. */
  log(): Promise<string>;
  /** SIGTERM to its group, SIGKILL after `graceMs`; resolves once it has exited. */
  stop(graceMs?: number): Promise<void>;
}

/** The environment of the test profile for a child process (not vitest's NODE_ENV), with `extra` on top. */
function childEnv(extra: Record<string, string>): NodeJS.ProcessEnv {
  const env: NodeJS.ProcessEnv = { ...process.env, ...extra };
  Reflect.deleteProperty(env, "NODE_ENV");
  return env;
}

async function startProcess(
  name: string,
  args: string[],
  env: Record<string, string>,
): Promise<StartedProcess> {
  const dir = path.join(testProfile.dir, "logs");
  await fs.mkdir(dir, { recursive: true });
  const logFile = path.join(dir, `${name}.log`);
  await fs.writeFile(logFile, "");
  const fd = openSync(logFile, "a");
  const child: ChildProcess = spawn(process.execPath, args, {
    cwd: root,
    env: childEnv(env),
    detached: true,
    stdio: ["ignore", fd, fd],
  });
  await fs.writeFile(pidFile(testProfile, name), String(child.pid ?? "")).catch(() => undefined);
  if (!child.pid) throw new Error(`could not start ${name}`);
  const pid = child.pid;
  const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
  const signal = (sig: NodeJS.Signals) => {
    try {
      process.kill(-pid, sig); // its group: `next start` runs a child of its own
    } catch {
      try {
        process.kill(pid, sig);
      } catch {
        /* gone already */
      }
    }
  };
  return {
    name,
    pid,
    logFile,
    log: () => fs.readFile(logFile, "utf8").catch(() => ""),
    async stop(graceMs = 15_000) {
      if (alive(pid)) {
        signal("SIGTERM");
        const timer = setTimeout(() => signal("SIGKILL"), graceMs);
        await exited;
        clearTimeout(timer);
      }
      await fs.rm(pidFile(testProfile, name), { force: true });
    },
  };
}

async function waitFor(what: string, check: () => Promise<boolean>, timeoutMs: number, p: StartedProcess) {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (await check()) return;
    if (!alive(p.pid)) break;
    await new Promise((r) => setTimeout(r, 250));
  }
  const tail = (await p.log()).split("\n").slice(-30).join("\n");
  throw new Error(`${what} did not come up within ${timeoutMs / 1000} s\n--- ${p.logFile} ---\n${tail}`);
}

/**
 * A second worker (scripts/worker.ts, unsupervised) against the test profile's database,
 * bucket and mail sink; resolves once it works its queues. Its identity, as it names
 * itself in render leases and fixity results, is in `identity`.
 */
export async function startExtraWorker(name: string): Promise<StartedProcess & { identity: string }> {
  const p = await startProcess(name, ["--import", "tsx", "scripts/worker.ts"], {});
  await waitFor(`the worker ${name}`, async () => /\[worker\] ready/.test(await p.log()), 60_000, p);
  const identity = /\[worker\] started as (\S+),/.exec(await p.log())?.[1];
  if (!identity) throw new Error(`the worker ${name} did not say who it is`);
  return { ...p, identity };
}

/** The first port from `from` on that nothing listens on (loopback). */
export async function freePort(from: number, tries = 10): Promise<number> {
  for (let port = from; port < from + tries; port++) if (!(await portOpen(port))) return port;
  throw new Error(`no free port in ${from}…${from + tries - 1}`);
}

/**
 * A second app: `next start` on the test profile's build, on `port`, with `env` over the
 * profile's (another database, another bucket). Resolves once /api/health answers 200.
 */
export async function startExtraApp(
  name: string,
  port: number,
  env: Record<string, string>,
): Promise<StartedProcess & { url: string }> {
  const url = `http://127.0.0.1:${port}`;
  const p = await startProcess(
    name,
    ["node_modules/next/dist/bin/next", "start", "-H", "127.0.0.1", "-p", String(port)],
    { ...env, APP_URL: url, NEXTAUTH_URL: url },
  );
  await waitFor(
    `the app ${name} on port ${port}`,
    async () => {
      try {
        return (await fetch(`${url}/api/health`)).status === 200;
      } catch {
        return false;
      }
    },
    60_000,
    p,
  );
  return { ...p, url };
}

/** Kills the test profile's s3rver by its PID (SIGKILL: no goodbye to its clients) and waits until its port is closed. */
export async function killS3rver(): Promise<number> {
  const pid = await readPidFile(pidFile(testProfile, "s3rver"));
  expect(alive(pid)).toBe(true);
  process.kill(pid, "SIGKILL");
  // Its port closes as it dies (the PID may linger a moment as a zombie until its parent reaps it).
  const deadline = Date.now() + 10_000;
  while ((await portOpen(testProfile.s3Port)) && Date.now() < deadline)
    await new Promise((r) => setTimeout(r, 50));
  expect(await portOpen(testProfile.s3Port)).toBe(false);
  return pid;
}

/** Starts s3rver again on the same port and data folder, as `npm start` does, and waits until it listens. */
export async function startS3rverAgain(): Promise<number> {
  await startS3rver(testProfile, await stackEnv(testProfile));
  return readPidFile(pidFile(testProfile, "s3rver"));
}
