// Re-render campaign throughput: builds a lab of its own (PostgreSQL, s3rver and a mail sink
// in storage/bench-campaign, on ports BENCH_PORT…+5, 56700 by default), makes BENCH_SIDES
// sides (200 by default) with a BENCH_SECONDS-second flat transfer each (120: two minutes of
// 44.1 kHz stereo, BENCH_BITS bits, 16 by default) uploaded through the presigned multipart
// flow, whose curve rests on version 1 of a preset; saves version 2 correcting version 1,
// starts BENCH_WORKERS worker processes (2 by default, `npm run worker` each), runs a
// campaign over every side as a curator, and prints sides per minute overall and per worker
// (from each render's recorded worker), with the render times. Stops what it started and
// removes its folder afterwards (BENCH_KEEP=1 keeps it).
//   npm run bench:campaign
//   BENCH_SIDES=40 npm run bench:campaign
import { type ChildProcess, spawn } from "node:child_process";
import { createHash } from "node:crypto";
import { createWriteStream, promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { performance } from "node:perf_hooks";
import { type Profile, profiles, root, runTsx, startServices, stopAll, stackEnv } from "../lib/stack";

const sideCount = Number(process.env.BENCH_SIDES ?? 200);
const seconds = Number(process.env.BENCH_SECONDS ?? 120);
const bits = Number(process.env.BENCH_BITS ?? 16);
const workerCount = Number(process.env.BENCH_WORKERS ?? 2);
const basePort = Number(process.env.BENCH_PORT ?? 56700);
const keep = process.env.BENCH_KEEP === "1";

const bench: Profile = {
  ...profiles.test,
  pgPort: basePort,
  s3Port: basePort + 1,
  smtpPort: basePort + 5,
  appPort: basePort + 10,
  dir: path.join(root, "storage", "bench-campaign"),
};

/** A flat transfer: 44.1 kHz stereo PCM, a few tones over low noise, the same bytes for every side. */
function flatTransfer(): Buffer {
  const rate = 44_100;
  const frames = rate * seconds;
  const bytesPer = bits / 8;
  const data = Buffer.alloc(frames * 2 * bytesPer);
  const full = 2 ** (bits - 1) - 1;
  let seed = 12345;
  for (let i = 0; i < frames; i++) {
    const t = i / rate;
    for (let ch = 0; ch < 2; ch++) {
      seed = (seed * 1103515245 + 12345) & 0x7fffffff;
      const v =
        0.2 * Math.sin(2 * Math.PI * (220 + ch * 110) * t) +
        0.1 * Math.sin(2 * Math.PI * 3000 * t) +
        0.02 * (seed / 0x7fffffff - 0.5);
      const s = Math.round(v * full);
      const at = (i * 2 + ch) * bytesPer;
      if (bits === 16) data.writeInt16LE(s, at);
      else data.writeIntLE(s, at, 3);
    }
  }
  const header = Buffer.alloc(44);
  header.write("RIFF", 0);
  header.writeUInt32LE(36 + data.length, 4);
  header.write("WAVE", 8);
  header.write("fmt ", 12);
  header.writeUInt32LE(16, 16);
  header.writeUInt16LE(1, 20);
  header.writeUInt16LE(2, 22);
  header.writeUInt32LE(rate, 24);
  header.writeUInt32LE(rate * 2 * bytesPer, 28);
  header.writeUInt16LE(2 * bytesPer, 32);
  header.writeUInt16LE(bits, 34);
  header.write("data", 36);
  header.writeUInt32LE(data.length, 40);
  return Buffer.concat([header, data]);
}

function quantile(values: number[], q: number): number {
  const s = [...values].sort((a, b) => a - b);
  return s.length ? s[Math.min(s.length - 1, Math.floor(q * s.length))] : NaN;
}

async function main(): Promise<void> {
  if (!Number.isInteger(sideCount) || sideCount < 1)
    throw new Error("BENCH_SIDES must be a whole number of sides");
  await stopAll(bench);
  await fs.rm(bench.dir, { recursive: true, force: true });
  const workers: ChildProcess[] = [];
  try {
    await startServices(bench);
    const env = await stackEnv(bench);
    await runTsx("scripts/migrate.ts", [], env);
    await runTsx("scripts/seed.ts", [], env);
    // The lab's own code from here on, against the bench's services.
    Object.assign(process.env, env);
    const { db } = await import("../../db");
    const { createPreset, updatePreset } = await import("../../lib/presets");
    const { createAccession } = await import("../../lib/catalogue/accessions");
    const { createDisc } = await import("../../lib/catalogue/discs");
    const { assignSides } = await import("../../lib/catalogue/workflow");
    const { startUpload, completeUpload } = await import("../../lib/transfers/uploads");
    const { chooseCurve } = await import("../../lib/transfers/curve-choices");
    const { startCampaign, getCampaign } = await import("../../lib/campaigns");
    const { demoAccounts } = await import("../seed/demo-accounts");

    const person = async (role: string) => {
      const email = demoAccounts.find((a) => a.role === role)!.email;
      return db
        .selectFrom("users")
        .select(["id", "email", "name", "role"])
        .where("email", "=", email)
        .executeTakeFirstOrThrow();
    };
    const [archivist, engineer, curator] = await Promise.all([
      person("archivist"),
      person("engineer"),
      person("curator"),
    ]);

    console.log(`[bench] arranging ${sideCount} sides of ${seconds} s (44.1 kHz stereo, ${bits} bit)…`);
    const t0 = performance.now();
    const preset = await createPreset(engineer, {
      name: "Bench lacquer curve",
      spec: {
        turnover: { unit: "hz", value: 500 },
        shelf: { unit: "hz", value: 50 },
        rolloff: { unit: "db10k", value: 12 },
      },
      changeNote: "Version 1, to be corrected",
    });
    const accession = await createAccession(archivist, {
      identifier: "BENCH-CAMPAIGN",
      source: "Campaign benchmark",
      receivedOn: "2026-12-03",
    });
    const sideIds: string[] = [];
    for (let d = 0; sideIds.length < sideCount; d++) {
      const designations = sideCount - sideIds.length >= 2 ? ["A", "B"] : ["A"];
      const disc = await createDisc(archivist, {
        accessionId: accession.id,
        shelfMark: `BENCH-${String(d + 1).padStart(4, "0")}`,
        labelName: "Varrowby",
        catalogueNumber: `VB ${3000 + d}`,
        format: "shellac_78",
        nominalSpeedRpm: 78,
        groove: "coarse",
        cut: "lateral",
        sides: designations.map((designation) => ({ designation, title: "Bench serenade" })),
      });
      sideIds.push(...disc.sides.map((s) => s.id));
    }
    await assignSides(archivist, { engineerId: engineer.id, sideIds });
    const wav = flatTransfer();
    const sha256 = createHash("sha256").update(wav).digest("hex");
    for (const [i, sideId] of sideIds.entries()) {
      const up = await startUpload(engineer, { sideId, fileName: `bench-${i}.wav`, bytes: wav.length });
      const parts: { partNumber: number; etag: string }[] = [];
      for (const { partNumber, url } of up.urls) {
        const res = await fetch(url, {
          method: "PUT",
          body: Uint8Array.from(wav.subarray((partNumber - 1) * up.partSize, partNumber * up.partSize)),
        });
        if (!res.ok) throw new Error(`part ${partNumber} of side ${i}: ${res.status}`);
        parts.push({ partNumber, etag: res.headers.get("etag")! });
      }
      await completeUpload(engineer, {
        uploadId: up.uploadId,
        parts,
        sha256,
        bytes: wav.length,
        stylusSize: "3.0 mil",
        stylusShape: "truncated elliptical",
        chain: "Bench",
        confirmDuplicate: true,
      });
    }
    await chooseCurve(engineer, {
      sideIds,
      presetId: preset.id,
      presetVersion: 1,
      overrides: { rolloff: { unit: "db10k", value: 14 } },
      cutSpeedRpm: 78,
      transferSpeedRpm: 78,
      rationale: "The label's leaflet for the series, as first read.",
      evidenceKind: "other",
    });
    await updatePreset(engineer, preset.id, {
      spec: {
        turnover: { unit: "hz", value: 350 },
        shelf: { unit: "hz", value: 50 },
        rolloff: { unit: "db10k", value: 12 },
      },
      changeNote: "Re-measured",
      corrects: [1],
      correctionNote: "The first turnover was a misprint; the bench's own test disc gives 350 Hz.",
    });
    console.log(`[bench] arranged in ${((performance.now() - t0) / 1000).toFixed(0)} s`);

    const logDir = path.join(bench.dir, "logs");
    await fs.mkdir(logDir, { recursive: true });
    for (let w = 0; w < workerCount; w++) {
      const out = createWriteStream(path.join(logDir, `bench-worker-${w + 1}.log`));
      const child = spawn(process.execPath, ["--import", "tsx", "scripts/worker.ts"], {
        cwd: root,
        env,
        stdio: ["ignore", "pipe", "pipe"],
      });
      child.stdout.pipe(out);
      child.stderr.pipe(out);
      workers.push(child);
    }
    // Let the workers start (pg-boss) before the clock starts.
    await new Promise((r) => setTimeout(r, 8000));

    const started = Date.now();
    const { campaignId } = await startCampaign(curator, {
      presetId: preset.id,
      correctingVersion: 2,
      sideIds,
      title: "Benchmark campaign",
    });
    const queuedMs = Date.now() - started;
    let last = "";
    for (;;) {
      const { campaign } = await getCampaign(campaignId);
      const line = `${campaign.done} done, ${campaign.failed} failed, ${campaign.waiting} waiting`;
      if (line !== last) {
        console.log(`[bench] ${((Date.now() - started) / 1000).toFixed(0)} s: ${line}`);
        last = line;
      }
      if (campaign.state === "finished") break;
      await new Promise((r) => setTimeout(r, 2000));
    }
    const finishedAt = await db
      .selectFrom("campaigns")
      .select("finished_at")
      .where("id", "=", campaignId)
      .executeTakeFirstOrThrow();
    const wallMinutes = (finishedAt.finished_at!.getTime() - started) / 60_000;
    const renders = await db
      .selectFrom("campaign_sides as cs")
      .innerJoin("renders as r", "r.id", "cs.render_id")
      .select(["r.worker_identity", "r.started_at", "r.finished_at", "r.status", "cs.state"])
      .where("cs.campaign_id", "=", campaignId)
      .execute();
    const done = renders.filter((r) => r.status === "done");
    const byWorker = new Map<string, typeof done>();
    for (const r of done)
      byWorker.set(r.worker_identity ?? "?", [...(byWorker.get(r.worker_identity ?? "?") ?? []), r]);
    const renderSeconds = done.map((r) => (r.finished_at!.getTime() - r.started_at!.getTime()) / 1000);

    console.log("");
    console.log(
      `Re-render campaign: ${sideCount} sides of ${seconds} s, ${workerCount} workers, ${os.cpus().length} CPUs`,
    );
    console.log(
      `  load average at the end: ${os
        .loadavg()
        .map((l) => l.toFixed(1))
        .join(" ")}`,
    );
    console.log(`  campaign started (choices recorded, renders queued) in ${(queuedMs / 1000).toFixed(1)} s`);
    console.log(
      `  all sides settled in ${(wallMinutes * 60).toFixed(0)} s: ${done.length} rendered, ${sideCount - done.length} not`,
    );
    console.log(`  overall: ${(done.length / wallMinutes).toFixed(1)} sides per minute`);
    for (const [who, rs] of byWorker) {
      const busy = rs.reduce((t, r) => t + (r.finished_at!.getTime() - r.started_at!.getTime()), 0) / 60_000;
      console.log(
        `  worker ${who}: ${rs.length} sides, ${(rs.length / wallMinutes).toFixed(1)} per minute of the campaign` +
          ` (${(rs.length / busy).toFixed(1)} per minute rendering)`,
      );
    }
    console.log(
      `  render time per side: p50 ${quantile(renderSeconds, 0.5).toFixed(1)} s, p95 ${quantile(renderSeconds, 0.95).toFixed(1)} s` +
        ` (${(seconds / quantile(renderSeconds, 0.5) || 0).toFixed(0)}× real time)`,
    );
    await db.destroy();
  } finally {
    for (const w of workers) if (w.pid && w.exitCode === null) w.kill("SIGTERM");
    await new Promise((r) => setTimeout(r, 1000));
    await stopAll(bench);
    if (!keep) await fs.rm(bench.dir, { recursive: true, force: true });
  }
}

main().then(
  () => process.exit(0),
  (err) => {
    console.error(err);
    process.exit(1);
  },
);
