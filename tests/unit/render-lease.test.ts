// The render lease's arithmetic, the recognising of a database outage, and the clean-up
// of temporary folders that killed workers leave behind.
import { spawnSync } from "node:child_process";
import { promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { leaseIsStale, leaseTimes, removeStaleRenderTmp, renderTmpPrefix } from "@/lib/jobs/render-lease";
import { isDatabaseUnavailable, toAppError } from "@/lib/http/errors";

describe("the render lease", () => {
  const now = Date.parse("2026-12-03T10:00:00Z");
  it("is stale only for a running render not renewed within the limit", () => {
    expect(
      leaseIsStale({ status: "running", heartbeatAt: new Date(now - 91_000), startedAt: null }, now, 90),
    ).toBe(true);
    expect(
      leaseIsStale({ status: "running", heartbeatAt: new Date(now - 89_000), startedAt: null }, now, 90),
    ).toBe(false);
    expect(
      leaseIsStale({ status: "queued", heartbeatAt: new Date(now - 600_000), startedAt: null }, now, 90),
    ).toBe(false);
    expect(
      leaseIsStale({ status: "done", heartbeatAt: new Date(now - 600_000), startedAt: null }, now, 90),
    ).toBe(false);
    // Before its first heartbeat (a render started by an earlier version), its start counts.
    expect(
      leaseIsStale(
        { status: "running", heartbeatAt: null, startedAt: new Date(now - 120_000).toISOString() },
        now,
        90,
      ),
    ).toBe(true);
  });
  it("defaults to renewing every 10 s, stale after 90 s, swept every 30 s, and refuses nonsense", () => {
    expect(leaseTimes({})).toEqual({
      RENDER_HEARTBEAT_SECONDS: 10,
      RENDER_LEASE_STALE_SECONDS: 90,
      RENDER_SWEEP_SECONDS: 30,
    });
    expect(leaseTimes({ RENDER_LEASE_STALE_SECONDS: "15" }).RENDER_LEASE_STALE_SECONDS).toBe(15);
    expect(() => leaseTimes({ RENDER_SWEEP_SECONDS: "0" })).toThrow();
  });
});

describe("a database outage", () => {
  it("is told apart from a failed statement and answered as 503", () => {
    expect(
      isDatabaseUnavailable(
        Object.assign(new Error("connect ECONNREFUSED 127.0.0.1:5432"), { code: "ECONNREFUSED" }),
      ),
    ).toBe(true);
    expect(
      isDatabaseUnavailable(
        Object.assign(new Error("terminating connection due to administrator command"), { code: "57P01" }),
      ),
    ).toBe(true);
    expect(isDatabaseUnavailable(new Error("Connection terminated unexpectedly"))).toBe(true);
    expect(
      isDatabaseUnavailable(
        Object.assign(new AggregateError([Object.assign(new Error("x"), { code: "ECONNREFUSED" })]), {}),
      ),
    ).toBe(true);
    expect(
      isDatabaseUnavailable(
        Object.assign(new Error('duplicate key value violates unique constraint "x"'), { code: "23505" }),
      ),
    ).toBe(false);
    const e = toAppError(Object.assign(new Error("refused"), { code: "ECONNREFUSED" }));
    expect(e.status).toBe(503);
    expect(e.message).toMatch(/database is unavailable/);
  });
});

describe("temporary folders of renders", () => {
  it("removes a dead worker's folder and keeps a living one's", async () => {
    // A PID that has just ended (a child that exited).
    const gone = spawnSync(process.execPath, ["-e", "0"]).pid;
    const dead = await fs.mkdtemp(path.join(os.tmpdir(), renderTmpPrefix(gone)));
    const mine = await fs.mkdtemp(path.join(os.tmpdir(), renderTmpPrefix()));
    await fs.writeFile(path.join(dead, "access.wav"), "partial");
    try {
      const removed = await removeStaleRenderTmp();
      expect(removed).toContain(dead);
      expect(removed).not.toContain(mine);
      await expect(fs.stat(dead)).rejects.toThrow();
      await expect(fs.stat(mine)).resolves.toBeTruthy();
    } finally {
      await fs.rm(dead, { recursive: true, force: true });
      await fs.rm(mine, { recursive: true, force: true });
    }
  });
});
