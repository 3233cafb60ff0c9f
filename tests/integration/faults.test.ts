// Fault drills against the test profile's real services: the worker killed by its PID in
// the middle of a render, and PostgreSQL stopped and started again while the lab runs.
// Each shows what the people of the lab see and that nothing is lost or done twice.
import { createHash } from "node:crypto";
import { promises as fs } from "node:fs";
import os from "node:os";
import { GetObjectCommand, ListObjectsV2Command } from "@aws-sdk/client-s3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { enqueueMail } from "@/lib/mail/outbox";
import { env } from "@/lib/env";
import { renderTmpPrefix } from "@/lib/jobs/render-lease";
import { s3 } from "@/lib/storage/s3";
import { pidFile, profile, startPostgres, stopPostgres, workerChildPidFile } from "@/scripts/lib/stack";
import { api, appUrl, uniqueEmail, waitForMail } from "../support/app";
import { alive, readPidFile } from "../support/processes";
import { testDb } from "../support/db";
import {
  assignedDisc,
  chooseCurve,
  type LabCookies,
  labCookies,
  until,
  uploadTransfer,
} from "../support/pipeline";

const test = profile("test");

afterAll(async () => {
  await testDb.destroy();
});

/** A flat mono transfer, 16-bit at 44.1 kHz, written here byte by byte: a tone with some noise. */
function monoTransfer(seconds: number): Uint8Array {
  const rate = 44_100;
  const frames = rate * seconds;
  const buf = Buffer.alloc(44 + frames * 2);
  buf.write("RIFF", 0, "ascii");
  buf.writeUInt32LE(36 + frames * 2, 4);
  buf.write("WAVEfmt ", 8, "ascii");
  buf.writeUInt32LE(16, 16);
  buf.writeUInt16LE(1, 20); // PCM
  buf.writeUInt16LE(1, 22); // mono
  buf.writeUInt32LE(rate, 24);
  buf.writeUInt32LE(rate * 2, 28);
  buf.writeUInt16LE(2, 32);
  buf.writeUInt16LE(16, 34);
  buf.write("data", 36, "ascii");
  buf.writeUInt32LE(frames * 2, 40);
  let seed = 12345;
  for (let i = 0; i < frames; i++) {
    seed = (seed * 1103515245 + 12345) & 0x7fffffff;
    const v = 0.3 * Math.sin((2 * Math.PI * 440 * i) / rate) + 0.1 * (seed / 0x7fffffff - 0.5);
    buf.writeInt16LE(Math.round(v * 32767), 44 + i * 2);
  }
  return new Uint8Array(buf.buffer, buf.byteOffset, buf.length);
}

async function ourRenderTmpDirs(pid: number): Promise<string[]> {
  return (await fs.readdir(os.tmpdir())).filter((n) => n.startsWith(renderTmpPrefix(pid)));
}

async function health(): Promise<{ status: number; database?: string }> {
  try {
    const res = await fetch(`${appUrl}/api/health`);
    return { status: res.status, database: ((await res.json()) as { database?: string }).database };
  } catch {
    return { status: 0 };
  }
}

let c: LabCookies;

beforeAll(async () => {
  c = await labCookies();
}, 60_000);

describe("the worker killed by its PID in the middle of a render", () => {
  it(
    "is started again by its supervisor, the dead worker's render is taken up again and recorded once, " +
      "with one object and no temporary folder left",
    async () => {
      // Seven minutes at 44.1 kHz, resampled to 192 kHz for the access copy: long enough to be killed in the middle.
      // Made first: seconds of work between two requests could outlast the app's keep-alive.
      const long = monoTransfer(420);
      const { sideIds } = await assignedDisc(c, `FAULT-KILL-${Date.now().toString(36)}`, ["A"]);
      const sideId = sideIds[0];
      await chooseCurve(c, sideIds);
      const up = await uploadTransfer(c, sideId, long, "fault-drill.wav");
      expect(up.done.status).toBe(201);

      const supervisorPid = await readPidFile(pidFile(test, "worker"));
      const queued = await api("/api/renders", {
        cookie: c.engineer,
        method: "POST",
        body: { sideId, channelMode: "both", bitDepth: 24, sampleRateHz: 192_000 },
      });
      expect(queued.status).toBe(202);
      const renderId: string = queued.body.renderId;

      // Running, with some of it done: now the worker dies.
      const before = await until(
        "the render under way",
        async () => {
          const r = await testDb
            .selectFrom("renders")
            .select(["status", "progress", "lease_owner"])
            .where("id", "=", renderId)
            .executeTakeFirstOrThrow();
          if (r.status === "done")
            throw new Error(
              "the render finished before the drill could kill its worker: make the transfer longer",
            );
          return r.status === "running" && r.progress > 0.01 ? r : undefined;
        },
        120_000,
      );
      const killedPid = await readPidFile(workerChildPidFile(test));
      expect(before.lease_owner).toContain(`:${killedPid}:`);
      expect((await ourRenderTmpDirs(killedPid)).length).toBe(1);
      process.kill(killedPid, "SIGKILL");
      const killedAt = Date.now();

      // The supervisor, still the same process, starts a new worker.
      const newPid = await until(
        "a new worker",
        async () => {
          const pid = await readPidFile(workerChildPidFile(test)).catch(() => 0);
          return pid && pid !== killedPid && alive(pid) ? pid : undefined;
        },
        30_000,
      );
      expect(alive(supervisorPid)).toBe(true);
      expect(newPid).not.toBe(killedPid);

      // The bench sees it stalled, or it is already taken up again; within two minutes a live worker holds it.
      let sawStalled = false;
      await until(
        "the render taken up again",
        async () => {
          const list = await api(`/api/sides/${sideId}/renders`, { cookie: c.engineer });
          const r = list.body.renders.find((x: { id: string }) => x.id === renderId);
          if (r?.stalled) sawStalled = true;
          const row = await testDb
            .selectFrom("renders")
            .select(["status", "lease_owner"])
            .where("id", "=", renderId)
            .executeTakeFirstOrThrow();
          return row.status === "done" ||
            (row.status === "running" && row.lease_owner && !row.lease_owner.includes(`:${killedPid}:`))
            ? row
            : undefined;
        },
        120_000,
      );
      expect(Date.now() - killedAt).toBeLessThan(120_000);
      // The stale limit is 15 s and the sweep runs every 5 s in the test profile: the bench
      // shows it stalled for a moment first (polled every half second).
      expect(sawStalled).toBe(true);

      const done = await until(
        "the render finished",
        async () => {
          const row = await testDb
            .selectFrom("renders")
            .selectAll()
            .where("id", "=", renderId)
            .executeTakeFirstOrThrow();
          if (row.status === "failed" || row.status === "cancelled")
            throw new Error(`render ${row.status}: ${row.error}`);
          return row.status === "done" ? row : undefined;
        },
        240_000,
      );

      // Exactly one render of the side, recorded once, one object under the side's access prefix.
      const rows = await testDb
        .selectFrom("renders")
        .select(["id", "status"])
        .where("side_id", "=", sideId)
        .execute();
      expect(rows).toEqual([{ id: renderId, status: "done" }]);
      const events = await testDb
        .selectFrom("provenance_events")
        .select("payload")
        .where("kind", "=", "side.rendered")
        .where("subject_id", "=", sideId)
        .execute();
      expect(events).toHaveLength(1);
      const listed = await s3().send(
        new ListObjectsV2Command({ Bucket: env().S3_BUCKET, Prefix: `access/${sideId}/` }),
      );
      expect((listed.Contents ?? []).map((o) => o.Key)).toEqual([`access/${sideId}/${renderId}.wav`]);
      expect(Number(listed.Contents![0].Size)).toBe(Number(done.bytes));
      const object = await s3().send(
        new GetObjectCommand({ Bucket: env().S3_BUCKET, Key: done.object_key! }),
      );
      const hash = createHash("sha256");
      for await (const chunk of object.Body as AsyncIterable<Uint8Array>) hash.update(chunk);
      expect(hash.digest("hex")).toBe(done.sha256);

      // The side is rendered, standing on this render.
      const side = await testDb
        .selectFrom("sides")
        .select(["status", "current_render_id"])
        .where("id", "=", sideId)
        .executeTakeFirstOrThrow();
      expect(side).toEqual({ status: "rendered", current_render_id: renderId });

      // The dead worker's temporary folder was removed by the one that replaced it.
      expect(await ourRenderTmpDirs(killedPid)).toEqual([]);
      expect(alive(supervisorPid)).toBe(true);
    },
    600_000,
  );

  it("lets the side's engineer cancel a stalled render, and no one else", async () => {
    const { sideIds } = await assignedDisc(c, `FAULT-CANCEL-${Date.now().toString(36)}`, ["A"]);
    const sideId = sideIds[0];
    await chooseCurve(c, sideIds);
    const bytes = monoTransfer(2);
    expect((await uploadTransfer(c, sideId, bytes, "short.wav")).done.status).toBe(201);
    const side = await testDb
      .selectFrom("sides")
      .select(["current_transfer_id", "current_curve_choice_id"])
      .where("id", "=", sideId)
      .executeTakeFirstOrThrow();
    const engineer = await testDb
      .selectFrom("users")
      .select("id")
      .where("role", "=", "engineer")
      .orderBy("created_at")
      .executeTakeFirstOrThrow();
    // A render whose worker vanished a while ago (as a killed worker leaves it); no job sent, so only the sweep could take it up.
    const stale = new Date(Date.now() - 600_000);
    const { id } = await testDb
      .insertInto("renders")
      .values({
        side_id: sideId,
        transfer_id: side.current_transfer_id!,
        curve_choice_id: side.current_curve_choice_id!,
        channel_mode: "both",
        bit_depth: 24,
        sample_rate_hz: 44_100,
        requested_by: engineer.id,
        status: "running",
        progress: 0.3,
        started_at: stale,
        heartbeat_at: stale,
        lease_owner: "gone:1:dead",
      })
      .returning("id")
      .executeTakeFirstOrThrow();
    const list = await api(`/api/sides/${sideId}/renders`, { cookie: c.engineer });
    const shown = list.body.renders.find((x: { id: string }) => x.id === id);
    // The sweep may already have handed it back (it runs every 5 s here): then it is queued, not stalled.
    if (shown.status === "running") expect(shown.stalled).toBe(true);

    const byCurator = await api(`/api/renders/${id}/cancel`, { cookie: c.curator, method: "POST", body: {} });
    expect(byCurator.status).toBe(403);
    const cancelled = await api(`/api/renders/${id}/cancel`, {
      cookie: c.engineer,
      method: "POST",
      body: {},
    });
    const row = await testDb
      .selectFrom("renders")
      .select(["status", "error"])
      .where("id", "=", id)
      .executeTakeFirstOrThrow();
    if (cancelled.status === 409) {
      // Taken up again and finished by the sweep's worker before the engineer's cancel: recorded once, nothing to cancel.
      expect(row.status).toBe("done");
      return;
    }
    expect(cancelled.status).toBe(200);
    expect(row.status).toBe("cancelled");
    const ev = await testDb
      .selectFrom("provenance_events")
      .select(["kind", "payload"])
      .where("kind", "=", "side.render_cancelled")
      .where("subject_id", "=", sideId)
      .execute();
    expect(ev).toHaveLength(1);
    // A second cancel finds nothing to cancel.
    expect(
      (await api(`/api/renders/${id}/cancel`, { cookie: c.engineer, method: "POST", body: {} })).status,
    ).toBe(409);
    // The side may be rendered again at once.
    const again = await api("/api/renders", {
      cookie: c.engineer,
      method: "POST",
      body: { sideId, channelMode: "both", bitDepth: 24 },
    });
    expect(again.status).toBe(202);
  }, 120_000);
});

describe("PostgreSQL stopped and started again while the lab runs", () => {
  it("answers 503 and says the database is unavailable while it is down; the same worker then sends mail queued after the restart", async () => {
    const supervisorPid = await readPidFile(pidFile(test, "worker"));
    const workerPid = await readPidFile(workerChildPidFile(test));
    expect((await health()).status).toBe(200);

    await stopPostgres(test);
    try {
      const down = await until(
        "the health check to see the database down",
        async () => {
          const h = await health();
          return h.status === 503 ? h : undefined;
        },
        30_000,
      );
      expect(down.database).not.toBe("ok");
      // A page says so plainly; an API request fails cleanly with 503.
      const page = await fetch(`${appUrl}/catalogue`, {
        headers: { cookie: c.engineer },
        redirect: "manual",
      });
      const html = await page.text();
      expect(html).toContain("database is unavailable");
      const listing = await api("/api/discs", { cookie: c.engineer });
      expect(listing.status).toBe(503);
      expect(listing.body.error.message).toMatch(/database is unavailable/);
      // The worker meets the outage (its mail loop, its queue polling) for a few seconds.
      await new Promise((r) => setTimeout(r, 5000));
      expect(alive(workerPid)).toBe(true);
    } finally {
      await startPostgres(test);
    }

    await until(
      "the health check to see the database back",
      async () => ((await health()).status === 200 ? true : undefined),
      60_000,
    );
    // Queued after the restart: the same worker, never restarted, sends it.
    const to = uniqueEmail("after-restart");
    await until(
      "the database to take the message",
      async () => {
        try {
          return await testDb.transaction().execute((trx) =>
            enqueueMail(trx, {
              to,
              subject: "Sent after the database came back",
              text: "The worker reconnected by itself.",
            }),
          );
        } catch {
          return undefined;
        }
      },
      30_000,
    );
    const mail = await waitForMail((m) => m.to.includes(to), 60_000);
    expect(mail.subject).toBe("Sent after the database came back");
    expect(alive(workerPid)).toBe(true);
    expect(await readPidFile(workerChildPidFile(test))).toBe(workerPid);
    expect(alive(supervisorPid)).toBe(true);

    // Nothing was half-applied: the provenance chain verifies end to end.
    const verified = await api("/api/provenance/verify", { cookie: c.curator });
    expect(verified.status).toBe(200);
    expect(verified.body.ok).toBe(true);
  }, 300_000);
});
