// A side's transfer from upload to access copy, against the running app, worker,
// PostgreSQL and s3rver: presigned multipart upload, the server's checks, the queued
// render, and the stored access copy.
import { createHash } from "node:crypto";
import { HeadObjectCommand } from "@aws-sdk/client-s3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { bufferSource, readWavHeader } from "@/lib/audio";
import { hashPassword } from "@/lib/auth/password";
import { api, appUrl, signInCookie, waitForMail } from "../support/app";
import { testDb } from "../support/db";
import {
  flatTransfer,
  fixityNow as fixityFor,
  renderAndWait as renderFor,
  uploadTransfer,
} from "../support/pipeline";
import { testBucketClient } from "../support/bucket";

const tag = Date.now().toString(36);
const cookie = {} as Record<"archivist" | "engineer" | "curator" | "curator2", string>;
let sideIds: string[];
let discId: string;

const bucket = testBucketClient();

const upload = (sideId: string, bytes: Uint8Array, name: string, opts: { sha256?: string } = {}) =>
  uploadTransfer(cookie, sideId, bytes, name, opts);

async function objectExists(key: string): Promise<boolean> {
  try {
    await bucket.send(new HeadObjectCommand({ Bucket: "rillbook", Key: key }));
    return true;
  } catch {
    return false;
  }
}

beforeAll(async () => {
  for (const role of ["archivist", "engineer", "curator"] as const) {
    const a = demoAccounts.find((x) => x.role === role)!;
    cookie[role] = await signInCookie(a.email, a.password);
  }
  const second = `curator2-${tag}@test.example`;
  await testDb
    .insertInto("users")
    .values({
      email: second,
      name: "Second Curator",
      role: "curator",
      password_hash: await hashPassword("second curator pass"),
    })
    .execute();
  cookie.curator2 = await signInCookie(second, "second curator pass");
  const engineerId = (
    await testDb
      .selectFrom("users")
      .select("id")
      .where("email", "=", demoAccounts.find((a) => a.role === "engineer")!.email)
      .executeTakeFirstOrThrow()
  ).id;
  const acc = await api("/api/accessions", {
    cookie: cookie.archivist,
    method: "POST",
    body: { identifier: `TP-${tag}`, source: "Pipeline test", receivedOn: "2026-11-30" },
  });
  const disc = await api("/api/discs", {
    cookie: cookie.archivist,
    method: "POST",
    body: {
      accessionId: acc.body.accession.id,
      shelfMark: `TP-${tag}`,
      format: "shellac_78",
      nominalSpeedRpm: 78,
      groove: "coarse",
      cut: "lateral",
      sides: [{ designation: "A" }, { designation: "B" }],
    },
  });
  discId = disc.body.disc.id;
  sideIds = disc.body.disc.sides.map((s: { id: string }) => s.id);
  await api("/api/assignments", {
    cookie: cookie.archivist,
    method: "POST",
    body: { engineerId, discIds: [discId] },
  });
});

afterAll(async () => {
  bucket.destroy();
  await testDb.destroy();
});

describe("uploading a flat transfer", () => {
  it("takes the flat transfer before any curve is chosen", async () => {
    // The flat transfer never depends on the curve: an assigned side with no choice may upload.
    const r = await api("/api/uploads", {
      cookie: cookie.engineer,
      method: "POST",
      body: { sideId: sideIds[0], fileName: "a.wav", bytes: 1000 },
    });
    expect(r.status).toBe(201);
    await api("/api/uploads/abort", {
      cookie: cookie.engineer,
      method: "POST",
      body: { uploadId: r.body.uploadId },
    });
  });

  it("accepts a good file after checking its size, SHA-256 and header, and records it", async () => {
    const choose = await api("/api/curve-choices", {
      cookie: cookie.engineer,
      method: "POST",
      body: {
        sideIds,
        overrides: {
          turnover: { unit: "us", value: 318 },
          shelf: { unit: "us", value: 3180 },
          rolloff: { unit: "us", value: 75 },
        },
        cutSpeedRpm: 78,
        transferSpeedRpm: 78,
        rationale: "Test pipeline: the standard microgroove curve as a stand-in.",
        evidenceKind: "other",
      },
    });
    expect(choose.status).toBe(201);
    const bytes = flatTransfer();
    const { key, done } = await upload(sideIds[0], bytes, "TP side A flat.wav");
    expect(done.status).toBe(201);
    expect(done.body.technical).toMatchObject({
      container: "RIFF",
      encoding: "pcm",
      bitsPerSample: 24,
      channels: 2,
      sampleRateHz: 44_100,
      frames: 132_300,
    });
    expect(await objectExists(key)).toBe(true);
    const t = await testDb
      .selectFrom("transfers")
      .select(["sha256", "bytes", "stylus_shape", "measured_speed_rpm"])
      .where("object_key", "=", key)
      .executeTakeFirstOrThrow();
    expect(t.sha256).toBe(createHash("sha256").update(bytes).digest("hex"));
    expect(Number(t.bytes)).toBe(bytes.length);
    expect(t.stylus_shape).toBe("truncated elliptical");
    // The curve was recorded first here, so the accepted transfer takes the side straight on to "curve chosen".
    const side = await testDb
      .selectFrom("sides")
      .select(["status", "current_transfer_id"])
      .where("id", "=", sideIds[0])
      .executeTakeFirstOrThrow();
    expect(side.status).toBe("curve_chosen");
    expect(side.current_transfer_id).toBe(done.body.transferId);
  });

  it("refuses a file that is not audio, and a checksum that does not match, keeping nothing", async () => {
    const text = new TextEncoder().encode("Track list, typed up from the sleeve.\n".repeat(40));
    const bad = await upload(sideIds[1], text, "notes.wav");
    expect(bad.done.status).toBe(422);
    expect(bad.done.body.error.message).toMatch(/RIFF/);
    expect(await objectExists(bad.key)).toBe(false);

    const wrongSum = await upload(sideIds[1], flatTransfer(), "b.wav", { sha256: "0".repeat(64) });
    expect(wrongSum.done.status).toBe(422);
    expect(wrongSum.done.body.error.message).toMatch(/SHA-256/);
    expect(await objectExists(wrongSum.key)).toBe(false);
    const rows = await testDb
      .selectFrom("transfers")
      .select("id")
      .where("side_id", "=", sideIds[1])
      .execute();
    expect(rows).toHaveLength(0);
  });
});

describe("rendering the access copy", () => {
  it("queues a render that the worker turns into a Broadcast WAVE access copy, recorded with its filter", async () => {
    const queued = await api("/api/renders", {
      cookie: cookie.engineer,
      method: "POST",
      body: { sideId: sideIds[0], channelMode: "sum", bitDepth: 24 },
    });
    expect(queued.status).toBe(202);
    const renderId = queued.body.renderId;
    let render: { status: string; sha256: string; error: string | null } | undefined;
    for (let i = 0; i < 120; i++) {
      const list = await api(`/api/sides/${sideIds[0]}/renders`, { cookie: cookie.curator });
      render = list.body.renders.find((r: { id: string }) => r.id === renderId);
      if (render?.status === "done" || render?.status === "failed") break;
      await new Promise((r) => setTimeout(r, 500));
    }
    expect(render?.error ?? null).toBeNull();
    expect(render?.status).toBe("done");

    const link = await fetch(`${appUrl}/api/renders/${renderId}/download`, {
      headers: { cookie: cookie.curator },
      redirect: "manual",
    });
    expect(link.status).toBe(302);
    const file = new Uint8Array(await (await fetch(link.headers.get("location")!)).arrayBuffer());
    expect(createHash("sha256").update(file).digest("hex")).toBe(render!.sha256);
    const header = await readWavHeader(bufferSource(file));
    // Summed to one channel for a lateral cut, same rate and length as the flat transfer.
    expect(header).toMatchObject({ channels: 1, sampleRateHz: 44_100, bitsPerSample: 24, frames: 132_300 });
    expect(header.bext?.codingHistory).toMatch(/A=PCM,F=44100,W=24,M=stereo/);
    expect(header.bext?.codingHistory).toMatch(/Rillbook/);

    const events = await testDb
      .selectFrom("provenance_events")
      .select(["kind", "payload"])
      .where("subject_id", "=", sideIds[0])
      .orderBy("seq", "desc")
      .execute();
    const rendered = events.find((e) => e.kind === "side.rendered")!.payload as {
      filter: { kind: string; delaySamples: number; sections: number[][] };
      accessCopy: { sha256: string };
    };
    expect(rendered.filter.kind).toBe("fir");
    expect(rendered.filter.sections.length).toBeGreaterThan(0);
    expect(rendered.accessCopy.sha256).toBe(render!.sha256);
    expect(
      (
        await testDb
          .selectFrom("sides")
          .select("status")
          .where("id", "=", sideIds[0])
          .executeTakeFirstOrThrow()
      ).status,
    ).toBe("rendered");
  }, 90_000);
});

const renderAndWait = (sideId: string) => renderFor(cookie, sideId);
const fixityNow = () => fixityFor(cookie, discId, [sideIds[0]]);

describe("an access copy at the lab's chosen rate", () => {
  it("resamples when the lab (or the engineer) asks for another rate than the transfer's", async () => {
    const admin = demoAccounts.find((a) => a.role === "admin")!;
    const adminCookie = await signInCookie(admin.email, admin.password);
    expect(
      (
        await api("/api/settings", {
          cookie: adminCookie,
          method: "PATCH",
          body: { accessCopyRateHz: 48_000 },
        })
      ).status,
    ).toBe(200);
    expect(
      (
        await api("/api/settings", {
          cookie: cookie.engineer,
          method: "PATCH",
          body: { accessCopyRateHz: 44_100 },
        })
      ).status,
    ).toBe(403);
    expect((await api("/api/settings", { cookie: cookie.engineer })).body.accessCopyRateHz).toBe(48_000);
    try {
      const r = await renderAndWait(sideIds[0]);
      const link = await fetch(`${appUrl}/api/renders/${r.id}/download`, {
        headers: { cookie: cookie.curator },
        redirect: "manual",
      });
      const file = new Uint8Array(await (await fetch(link.headers.get("location")!)).arrayBuffer());
      const header = await readWavHeader(bufferSource(file));
      // 3 s at 44.1 kHz (132 300 frames) becomes 3 s at 48 kHz.
      expect(header).toMatchObject({ sampleRateHz: 48_000, frames: 144_000 });
      expect(header.bext?.codingHistory).toMatch(/F=48000.*resampled from 44100 Hz/s);
    } finally {
      await api("/api/settings", {
        cookie: adminCookie,
        method: "PATCH",
        body: { accessCopyRateHz: "transfer" },
      });
    }
  }, 90_000);
});

describe("speed correction in the render", () => {
  const choice = (correctSpeed: boolean, cutSpeedRpm: number) =>
    api("/api/curve-choices", {
      cookie: cookie.engineer,
      method: "POST",
      body: {
        sideIds: [sideIds[0]],
        overrides: {
          turnover: { unit: "us", value: 318 },
          shelf: { unit: "us", value: 3180 },
          rolloff: { unit: "us", value: 75 },
        },
        cutSpeedRpm,
        transferSpeedRpm: 78,
        correctSpeed,
        rationale: "The label's pitch pipe on the run-in says the disc was cut at 80 rpm.",
        evidenceKind: "disc_documentation",
      },
    });

  it("refuses to correct the speed of a disc transferred at the speed it was cut at", async () => {
    const r = await choice(true, 78);
    expect(r.status).toBe(422);
    expect(JSON.stringify(r.body)).toMatch(/no speed to correct/);
  });

  it("resamples a disc cut at 80 rpm and transferred at 78 by 80/78, and says so in the file and the record", async () => {
    const chosen = await choice(true, 80);
    expect(chosen.status).toBe(201);
    const choiceId = chosen.body.choices[0].choiceId as string;
    expect(
      (
        await testDb
          .selectFrom("curve_choices")
          .select("correct_speed")
          .where("id", "=", choiceId)
          .executeTakeFirstOrThrow()
      ).correct_speed,
    ).toBe(true);
    const r = await renderAndWait(sideIds[0]);
    const link = await fetch(`${appUrl}/api/renders/${r.id}/download`, {
      headers: { cookie: cookie.curator },
      redirect: "manual",
    });
    const file = new Uint8Array(await (await fetch(link.headers.get("location")!)).arrayBuffer());
    const header = await readWavHeader(bufferSource(file));
    // 132 300 frames played at 80/78 of the transfer's speed: round(132 300 × 78/80) = 128 993, at the transfer's rate.
    expect(header).toMatchObject({ sampleRateHz: 44_100, frames: 128_993 });
    expect(header.bext?.codingHistory).toMatch(
      /speed ratio 0\.975;.*speed corrected from 78 to 80 rpm \(x1\.025641/s,
    );
    const row = await testDb
      .selectFrom("renders")
      .select("filter")
      .where("id", "=", r.id)
      .executeTakeFirstOrThrow();
    expect(row.filter).toMatchObject({
      spec: { speedRatio: 0.975 },
      filterSpec: { speedRatio: 0.975, reference: { hz: 975, db: 0 } },
      speedCorrection: {
        cutSpeedRpm: 80,
        transferSpeedRpm: 78,
        factor: expect.closeTo(80 / 78, 12),
        playedAtHz: expect.closeTo((44_100 * 80) / 78, 6),
      },
    });
    const event = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("subject_id", "=", sideIds[0])
      .where("kind", "=", "side.rendered")
      .orderBy("seq", "desc")
      .executeTakeFirstOrThrow();
    expect(event.payload).toMatchObject({ renderId: r.id, speedCorrection: { factor: 80 / 78 } });
  }, 90_000);
});

describe("review", () => {
  it("returns with a reason, refuses approval by the maker and before fixity, and approves after", async () => {
    const sideA = sideIds[0];
    expect(
      (
        await api(`/api/sides/${sideA}/transition`, {
          cookie: cookie.engineer,
          method: "POST",
          body: { to: "in_review" },
        })
      ).status,
    ).toBe(200);
    const queue = await api("/api/reviews", { cookie: cookie.curator });
    expect(queue.body.sides.map((s: { id: string }) => s.id)).toContain(sideA);

    const noReason = await api(`/api/sides/${sideA}/review`, {
      cookie: cookie.curator,
      method: "POST",
      body: { decision: "returned" },
    });
    expect(noReason.status).toBe(422);
    const back = await api(`/api/sides/${sideA}/review`, {
      cookie: cookie.curator,
      method: "POST",
      body: { decision: "returned", reason: "Rolloff too strong: the sibilants are gone." },
    });
    expect(back.status).toBe(200);
    const mail = await waitForMail((m) => m.subject.includes(`TP-${tag} side A came back`));
    expect(mail.text).toMatch(/sibilants/);

    // The engineer changes the curve: the accepted transfer stands, the side needs its render again; render and resubmit.
    const rechoose = await api("/api/curve-choices", {
      cookie: cookie.engineer,
      method: "POST",
      body: {
        sideIds: [sideA],
        overrides: {
          turnover: { unit: "us", value: 318 },
          shelf: { unit: "us", value: 3180 },
          rolloff: { unit: "us", value: 50 },
        },
        cutSpeedRpm: 78,
        transferSpeedRpm: 78,
        rationale: "Lighter rolloff after the curator's note.",
        evidenceKind: "listening",
      },
    });
    expect(rechoose.status).toBe(201);
    expect(
      (await testDb.selectFrom("sides").select("status").where("id", "=", sideA).executeTakeFirstOrThrow())
        .status,
    ).toBe("curve_chosen");
    await renderAndWait(sideA);
    expect(
      (
        await api(`/api/sides/${sideA}/transition`, {
          cookie: cookie.engineer,
          method: "POST",
          body: { to: "in_review" },
        })
      ).status,
    ).toBe(200);

    const early = await api(`/api/sides/${sideA}/review`, {
      cookie: cookie.curator,
      method: "POST",
      body: { decision: "approved" },
    });
    expect(early.status).toBe(409);
    expect(early.body.error.message).toMatch(/fixity/);

    await fixityNow();
    // The engineer holds the curator role nowhere: a curator who made the work is refused.
    await testDb
      .updateTable("renders")
      .set({
        requested_by: (
          await testDb
            .selectFrom("users")
            .select("id")
            .where("email", "=", `curator2-${tag}@test.example`)
            .executeTakeFirstOrThrow()
        ).id,
      })
      .where("side_id", "=", sideA)
      .where("status", "=", "done")
      .execute();
    const byMaker = await api(`/api/sides/${sideA}/review`, {
      cookie: cookie.curator2,
      method: "POST",
      body: { decision: "approved" },
    });
    expect(byMaker.status).toBe(403);
    const approved = await api(`/api/sides/${sideA}/review`, {
      cookie: cookie.curator,
      method: "POST",
      body: { decision: "approved" },
    });
    expect(approved.status).toBe(200);
    expect(
      (await testDb.selectFrom("sides").select("status").where("id", "=", sideA).executeTakeFirstOrThrow())
        .status,
    ).toBe("approved");
  }, 180_000);
});
