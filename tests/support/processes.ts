// The fault drills' hands on the test profile's processes: read a PID from its file,
// see whether it lives, kill s3rver by its PID and start it again on the same port and
// data folder (scripts/lib/stack.ts keeps the PIDs in storage/test/run/).
import { promises as fs } from "node:fs";
import { expect } from "vitest";
import { pidFile, portOpen, profile, stackEnv, startS3rver } from "@/scripts/lib/stack";

export const testProfile = profile("test");

export async function readPidFile(file: string): Promise<number> {
  const pid = Number((await fs.readFile(file, "utf8")).trim());
  expect(Number.isInteger(pid) && pid > 0).toBe(true);
  return pid;
}

export function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
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
