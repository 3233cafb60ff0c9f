// The worker's supervisor: runs scripts/worker.ts as its child and starts it again
// whenever it exits, after a back-off that grows while the worker keeps failing soon
// after starting (1 s, 2 s, 4 s … up to 60 s) and starts over once a run lasted a
// minute. Each exit is logged with its code or signal. SIGTERM or SIGINT stops the
// child and then the supervisor. scripts/lib/stack.ts records the supervisor's PID
// (worker.pid; the child shares its process group, so `npm run stop` ends both) and the
// current child's PID is written to WORKER_CHILD_PID_FILE when that is set.
import { type ChildProcess, spawn } from "node:child_process";
import { promises as fs } from "node:fs";

const childPidFile = process.env.WORKER_CHILD_PID_FILE;
const minDelayMs = 1000;
const maxDelayMs = 60_000;
const healthyRunMs = 60_000;

let child: ChildProcess | null = null;
let stopping = false;
let delayMs = minDelayMs;
let restarts = 0;

function log(message: string): void {
  console.log(`[supervisor ${new Date().toISOString()}] ${message}`);
}

function startChild(): void {
  const startedAt = Date.now();
  const c = spawn(process.execPath, ["--import", "tsx", "scripts/worker.ts"], {
    stdio: "inherit",
    env: process.env,
  });
  child = c;
  if (childPidFile && c.pid) void fs.writeFile(childPidFile, String(c.pid)).catch(() => undefined);
  log(`worker started (pid ${c.pid}${restarts ? `, restart ${restarts}` : ""})`);
  c.on("error", (err) => log(`could not start the worker: ${err.message}`));
  c.on("exit", (code, signal) => {
    child = null;
    const why = signal ? `was ended by ${signal}` : `exited with code ${code}`;
    if (stopping) {
      log(`worker ${why} while stopping`);
      void finish();
      return;
    }
    const ran = Date.now() - startedAt;
    if (ran >= healthyRunMs) delayMs = minDelayMs;
    log(
      `worker (pid ${c.pid}) ${why} after ${(ran / 1000).toFixed(1)} s; starting it again in ${delayMs / 1000} s`,
    );
    const wait = delayMs;
    delayMs = Math.min(maxDelayMs, delayMs * 2);
    restarts += 1;
    setTimeout(() => {
      if (!stopping) startChild();
    }, wait);
  });
}

async function finish(): Promise<void> {
  if (childPidFile) await fs.rm(childPidFile, { force: true }).catch(() => undefined);
  process.exit(0);
}

function stop(signal: NodeJS.Signals): void {
  if (stopping) return;
  stopping = true;
  log(`${signal} received: stopping the worker`);
  if (!child) {
    void finish();
    return;
  }
  child.kill("SIGTERM");
  // The worker finishes its job gracefully within 10 s; past 15 s it is ended.
  setTimeout(() => child?.kill("SIGKILL"), 15_000).unref();
}

process.on("SIGTERM", () => stop("SIGTERM"));
process.on("SIGINT", () => stop("SIGINT"));
startChild();
