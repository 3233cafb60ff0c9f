// Bounded load against a running lab on this machine (see README, "Load").
//   npm run load                                   20 clients, 1 s pause, 40 s
//   npm run load -- --clients 20 --pause 0 --duration 40
//   npm run load -- --clients 100 --ramp 20:10:10 --duration 120    (finds the saturation point)
// Signs in as the demo people, then mixes catalogue lists and searches, disc reads, the
// catalogue, disc and bench pages, preset reads, curve responses and uploads of small
// transfers through the real presigned-upload flow, each followed by a render. It stops by
// itself after --duration seconds or --requests requests, whichever comes first, and
// refuses any host but 127.0.0.1 or localhost. It writes to the lab it runs against
// (an accession LOAD-TEST with discs LOAD-1…, their transfers, renders and provenance),
// so run it against the demo or test lab, never the archive's own.
import { createHash } from "node:crypto";
import { performance } from "node:perf_hooks";
import { z } from "zod";
import { demoAccounts } from "../seed/demo-accounts";
import { cpuSecondsBetween, cpuSnapshot, processGroups } from "./cpu";
import type { Role } from "../../lib/auth/roles";
import { percentile, rampSteps, type Sample, saturationPoint, stepSummaries, summarize } from "./stats";

// ---------------------------------------------------------------------------------------
// Options

const loopback = new Set(["127.0.0.1", "localhost", "[::1]"]);

const optionsSchema = z
  .object({
    url: z
      .url()
      .default("http://127.0.0.1:3000")
      .refine((u) => loopback.has(new URL(u).hostname), "The load runs against 127.0.0.1 or localhost only."),
    clients: z.coerce.number().int().min(1).max(500).default(20),
    pause: z.coerce.number().int().min(0).max(60_000).default(1000),
    duration: z.coerce.number().positive().max(1800).default(40),
    requests: z.coerce.number().int().positive().max(1_000_000).optional(),
    ramp: z
      .string()
      .regex(/^\d+(\.\d+)?:\d+(\.\d+)?:\d+(\.\d+)?$/, "--ramp is START:STEP:SECONDS, e.g. 20:10:10")
      .optional(),
    uploaders: z.coerce.number().int().min(0).max(20).default(2),
    uploadSeconds: z.coerce.number().positive().max(60).default(3),
    drain: z.coerce.number().min(0).max(600).default(60),
    limit: z.coerce.number().positive().default(500),
    json: z.string().optional(),
    /** Seconds of unrecorded traffic first, so the app has loaded its code before anything is measured. */
    warmup: z.coerce.number().min(0).max(120).default(5),
    /** Only these kinds (comma-separated, by the start of their names), to profile one at a time. */
    only: z.string().optional(),
    /** Where the lab's PID files are, to report the CPU its processes used (npm start's demo lab by default). */
    profileDir: z.string().default("storage/demo"),
  })
  .strict();
type Options = z.infer<typeof optionsSchema>;

function parseArgs(argv: string[]): Options {
  const raw: Record<string, string> = {};
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (!a.startsWith("--")) throw new Error(`Unexpected argument "${a}": options are --name value.`);
    const [name, inline] = a.slice(2).split("=", 2);
    const value = inline ?? argv[++i];
    if (value === undefined) throw new Error(`--${name} needs a value.`);
    raw[name.replace(/-([a-z])/g, (_, c: string) => c.toUpperCase())] = value;
  }
  const parsed = optionsSchema.safeParse(raw);
  if (!parsed.success) {
    throw new Error(parsed.error.issues.map((i) => `--${i.path.join(".") || "?"}: ${i.message}`).join("\n"));
  }
  return parsed.data;
}

// ---------------------------------------------------------------------------------------
// HTTP as a signed-in browser would

class Client {
  constructor(
    readonly base: string,
    readonly role: Role,
    readonly cookie: string,
  ) {}

  async request(
    path: string,
    init: { method?: string; json?: unknown; accept?: string } = {},
  ): Promise<{ status: number; body: string }> {
    const res = await fetch(`${this.base}${path}`, {
      method: init.method ?? "GET",
      redirect: "manual",
      headers: {
        accept: init.accept ?? "application/json",
        origin: new URL(this.base).origin,
        cookie: this.cookie,
        ...(init.json !== undefined ? { "content-type": "application/json" } : {}),
      },
      body: init.json !== undefined ? JSON.stringify(init.json) : undefined,
    });
    return { status: res.status, body: await res.text() };
  }

  async json<T>(path: string, init: { method?: string; json?: unknown } = {}): Promise<T> {
    const r = await this.request(path, init);
    if (r.status < 200 || r.status >= 300)
      throw new Error(`${init.method ?? "GET"} ${path} answered ${r.status}: ${r.body.slice(0, 300)}`);
    return JSON.parse(r.body) as T;
  }
}

function cookiesOf(res: Response): string {
  return res.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .join("; ");
}

/** Signs in through next-auth's credentials endpoint, with its CSRF token, as the sign-in form does. */
async function signIn(base: string, role: Role): Promise<Client> {
  const account = demoAccounts.find((a) => a.role === role);
  if (!account) throw new Error(`no demo account for ${role}`);
  const csrfRes = await fetch(`${base}/api/auth/csrf`);
  const { csrfToken } = (await csrfRes.json()) as { csrfToken: string };
  const jar = cookiesOf(csrfRes);
  const res = await fetch(`${base}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: {
      "content-type": "application/x-www-form-urlencoded",
      origin: new URL(base).origin,
      cookie: jar,
    },
    body: new URLSearchParams({ csrfToken, email: account.email, password: account.password, json: "true" }),
  });
  await res.text();
  const cookie = [jar, cookiesOf(res)].filter(Boolean).join("; ");
  if (!/next-auth\.session-token=/.test(cookie))
    throw new Error(`Signing in as ${account.email} failed (${res.status}). Is the demo lab seeded?`);
  return new Client(base, role, cookie);
}

// ---------------------------------------------------------------------------------------
// A small flat transfer: 44.1 kHz 24-bit stereo, a tone with some noise, different each time

function smallTransfer(seconds: number, seed: number): Buffer {
  const rate = 44_100;
  const frames = Math.round(rate * seconds);
  const dataBytes = frames * 2 * 3;
  const b = Buffer.alloc(44 + dataBytes);
  b.write("RIFF", 0, "latin1");
  b.writeUInt32LE(36 + dataBytes, 4);
  b.write("WAVE", 8, "latin1");
  b.write("fmt ", 12, "latin1");
  b.writeUInt32LE(16, 16);
  b.writeUInt16LE(1, 20); // PCM
  b.writeUInt16LE(2, 22);
  b.writeUInt32LE(rate, 24);
  b.writeUInt32LE(rate * 6, 28);
  b.writeUInt16LE(6, 32);
  b.writeUInt16LE(24, 34);
  b.write("data", 36, "latin1");
  b.writeUInt32LE(dataBytes, 40);
  let x = (seed * 2654435761) >>> 0 || 1;
  const full = 2 ** 23 - 1;
  for (let i = 0, o = 44; i < frames; i++) {
    const tone = 0.3 * Math.sin((2 * Math.PI * (220 + (seed % 50)) * i) / rate);
    for (let ch = 0; ch < 2; ch++) {
      x ^= x << 13;
      x ^= x >>> 17;
      x ^= x << 5;
      x >>>= 0;
      const noise = (x / 2 ** 32 - 0.5) * 0.1;
      b.writeIntLE(Math.round((tone + noise) * full), o, 3);
      o += 3;
    }
  }
  return b;
}

// ---------------------------------------------------------------------------------------
// What the run works on, found (or made once, under the LOAD-TEST accession) before it starts

interface World {
  discIds: string[];
  searchTerms: string[];
  presetIds: string[];
  benchSideIds: string[];
  /** One side per uploading client, assigned to the demo engineer, with a curve chosen. */
  loadSideIds: string[];
}

interface DiscListAnswer {
  rows: {
    id: string;
    shelfMark: string;
    labelName: string;
    catalogueNumber: string;
    sides: { id: string; title: string; status: string }[];
  }[];
  total: number;
}

async function prepareWorld(clients: Record<Role, Client>, uploaders: number): Promise<World> {
  const { archivist, engineer } = clients;
  const discIds: string[] = [];
  const terms = new Set<string>();
  for (let page = 1; page <= 10; page++) {
    const list = await archivist.json<DiscListAnswer>(`/api/discs?pageSize=200&page=${page}`);
    for (const r of list.rows) {
      if (!r.shelfMark.startsWith("LOAD-")) discIds.push(r.id);
      terms.add(r.labelName);
      terms.add(r.catalogueNumber);
      for (const s of r.sides) {
        const word = s.title.split(/\s+/).find((w) => w.length > 4);
        if (word) terms.add(word);
      }
    }
    if (page * 200 >= list.total) break;
  }
  const presets = await engineer.json<{ presets: { id: string }[] }>("/api/curves/presets");

  // The uploading clients' sides: discs LOAD-1 … LOAD-n under one accession, made once.
  const loadSideIds: string[] = [];
  if (uploaders > 0) {
    const { accessions } = await archivist.json<{ accessions: { id: string; identifier: string }[] }>(
      "/api/accessions",
    );
    let accessionId = accessions.find((a) => a.identifier === "LOAD-TEST")?.id;
    if (!accessionId) {
      const made = await archivist.json<{ accession: { id: string } }>("/api/accessions", {
        method: "POST",
        json: {
          identifier: "LOAD-TEST",
          source: "Made by the load script (scripts/load/run.ts): test uploads and renders only.",
          receivedOn: new Date().toISOString().slice(0, 10),
        },
      });
      accessionId = made.accession.id;
    }
    const { engineers } = await archivist.json<{ engineers: { id: string; name: string }[] }>(
      "/api/engineers",
    );
    const me = demoAccounts.find((a) => a.role === "engineer")!;
    const engineerId = engineers.find((e) => e.name === me.name)?.id;
    if (!engineerId) throw new Error(`the demo engineer ${me.name} is not an engineer of this lab`);
    for (let k = 1; k <= uploaders; k++) {
      const shelfMark = `LOAD-${k}`;
      const found = await archivist.json<DiscListAnswer>(
        `/api/discs?accession=${accessionId}&q=${encodeURIComponent(shelfMark)}&pageSize=200`,
      );
      const disc = found.rows.find((r) => r.shelfMark === shelfMark);
      if (!disc) {
        const made = await archivist.json<{ disc: { id: string; sides: { id: string }[] } }>("/api/discs", {
          method: "POST",
          json: {
            accessionId,
            shelfMark,
            labelName: "Load test",
            catalogueNumber: `LT ${k}`,
            format: "shellac_78",
            nominalSpeedRpm: 78,
            groove: "coarse",
            cut: "lateral",
            sides: [{ designation: "A", title: "Load test side" }],
          },
        });
        await archivist.json("/api/assignments", {
          method: "POST",
          json: { engineerId, discIds: [made.disc.id] },
        });
        await engineer.json("/api/curve-choices", {
          method: "POST",
          json: {
            sideIds: [made.disc.sides[0].id],
            overrides: {
              turnover: { unit: "us", value: 318 },
              shelf: { unit: "us", value: 3180 },
              rolloff: { unit: "us", value: 75 },
            },
            cutSpeedRpm: 78,
            transferSpeedRpm: 78,
            rationale: "Standard curve for the load script's test side.",
            evidenceKind: "other",
          },
        });
        loadSideIds.push(made.disc.sides[0].id);
      } else {
        loadSideIds.push(disc.sides[0].id);
      }
    }
  }
  const queue = await engineer.json<{ sides: { id: string }[] }>("/api/queue");
  const benchSideIds = queue.sides.map((s) => s.id).filter((id) => !loadSideIds.includes(id));
  return {
    discIds,
    searchTerms: [...terms].filter(Boolean),
    presetIds: presets.presets.map((p) => p.id),
    benchSideIds: benchSideIds.length > 0 ? benchSideIds : loadSideIds,
    loadSideIds,
  };
}

// ---------------------------------------------------------------------------------------
// The mix

type Pick = <T>(list: readonly T[]) => T;
const pick: Pick = (list) => list[Math.floor(Math.random() * list.length)];

interface Kind {
  name: string;
  weight: number;
  roles: readonly Role[];
  run: (c: Client, w: World) => Promise<{ status: number }>;
}

const sorts = ["shelfMark", "-updatedAt", "labelName", "catalogueNumber"];

const kinds: Kind[] = [
  {
    name: "list (JSON)",
    weight: 18,
    roles: ["admin", "archivist", "engineer", "curator"],
    run: (c) =>
      c.request(`/api/discs?page=${1 + Math.floor(Math.random() * 6)}&sort=${pick(sorts)}&pageSize=50`),
  },
  {
    name: "search (JSON)",
    weight: 18,
    roles: ["admin", "archivist", "engineer", "curator"],
    run: (c, w) => c.request(`/api/discs?q=${encodeURIComponent(pick(w.searchTerms))}&pageSize=50`),
  },
  {
    name: "disc (JSON)",
    weight: 12,
    roles: ["admin", "archivist", "engineer", "curator"],
    run: (c, w) => c.request(`/api/discs/${pick(w.discIds)}`),
  },
  {
    name: "catalogue page",
    weight: 10,
    roles: ["admin", "archivist", "engineer", "curator"],
    run: (c) => c.request(`/catalogue`, { accept: "text/html" }),
  },
  {
    name: "disc page",
    weight: 10,
    roles: ["admin", "archivist", "engineer", "curator"],
    run: (c, w) => c.request(`/catalogue/${pick(w.discIds)}`, { accept: "text/html" }),
  },
  {
    name: "bench page",
    weight: 8,
    roles: ["engineer"],
    run: (c, w) =>
      Math.random() < 0.3
        ? c.request(`/bench`, { accept: "text/html" })
        : c.request(`/bench/${pick(w.benchSideIds)}`, { accept: "text/html" }),
  },
  {
    name: "presets (JSON)",
    weight: 10,
    roles: ["admin", "archivist", "engineer", "curator"],
    run: (c, w) =>
      Math.random() < 0.4 || w.presetIds.length === 0
        ? c.request(`/api/curves/presets`)
        : c.request(`/api/curves/presets/${pick(w.presetIds)}`),
  },
  {
    name: "curve response (JSON)",
    weight: 10,
    roles: ["admin", "archivist", "engineer", "curator"],
    run: (c) =>
      c.request(`/api/curves/response`, {
        method: "POST",
        json: {
          spec: {
            turnover: { unit: "hz", value: 250 + Math.round(Math.random() * 550) },
            shelf: { unit: "hz", value: 30 + Math.round(Math.random() * 40) },
            rolloff: { unit: "db10k", value: Math.round(Math.random() * 16) },
          },
          sampleRateHz: pick([44_100, 48_000, 96_000]),
        },
      }),
  },
];

const clientRoles: readonly Role[] = ["engineer", "archivist", "curator", "engineer", "admin"];

// ---------------------------------------------------------------------------------------
// Pacing: a shared gate that lets requests through at the ramp's current rate

class RateGate {
  private next = 0;
  constructor(private rate: () => number | null) {}
  /** Waits for this request's turn; a late client takes the next free turn, with no catching up. */
  async turn(): Promise<void> {
    const r = this.rate();
    if (r === null) return;
    const now = performance.now();
    const at = Math.max(now, this.next);
    this.next = at + 1000 / r;
    if (at > now) await new Promise((res) => setTimeout(res, at - now));
  }
}

const sleep = (ms: number) => new Promise((res) => setTimeout(res, ms));

// ---------------------------------------------------------------------------------------

interface UploadRecord {
  sideId: string;
  renderId: string;
  requestedAt: number;
}

async function main(): Promise<void> {
  const o = parseArgs(process.argv.slice(2));
  const base = new URL(o.url).origin;
  const steps = o.ramp
    ? (() => {
        const [start, step, seconds] = o.ramp.split(":").map(Number);
        return rampSteps(start, step, seconds, o.duration);
      })()
    : [{ targetRate: 0, seconds: o.duration }];

  console.log(
    `Load against ${base}: ${o.clients} clients, ${o.duration} s` +
      (o.ramp ? `, ramp ${o.ramp} (start:step req/s:seconds)` : `, ${o.pause} ms pause`) +
      (o.requests ? `, at most ${o.requests} requests` : ""),
  );

  const health = await fetch(`${base}/api/health`).catch((err: unknown) => {
    throw new Error(
      `No lab answers at ${base} (${err instanceof Error ? err.message : String(err)}). Start it with npm start.`,
    );
  });
  if (health.status !== 200) throw new Error(`The lab at ${base} is not healthy: ${await health.text()}`);
  await health.text();

  // One sign-in per client, as the demo people (each client its own session).
  const roles = Array.from({ length: o.clients }, (_, i) => clientRoles[i % clientRoles.length]);
  const people = {} as Record<Role, Client>;
  for (const role of ["admin", "archivist", "engineer", "curator"] as const)
    people[role] = await signIn(base, role);
  const clients: Client[] = [];
  for (const role of roles) clients.push(await signIn(base, role));
  const world = await prepareWorld(
    people,
    Math.min(o.uploaders, roles.filter((r) => r === "engineer").length),
  );
  console.log(
    `Prepared: ${world.discIds.length} discs, ${world.searchTerms.length} search terms, ${world.presetIds.length} presets, ` +
      `${world.benchSideIds.length} bench sides, ${world.loadSideIds.length} upload sides.`,
  );

  if (o.warmup > 0) {
    const until = performance.now() + o.warmup * 1000;
    await Promise.all(
      clients.map(async (c) => {
        const mine = kinds.filter((k) => k.roles.includes(c.role));
        while (performance.now() < until)
          await pick(mine)
            .run(c, world)
            .catch(() => undefined);
      }),
    );
  }

  const samples: Sample[] = [];
  const uploads: UploadRecord[] = [];
  const failures = new Map<string, number>();
  const t0 = performance.now();
  const endAt = t0 + o.duration * 1000;
  let sent = 0;
  const stepAt = (t: number) => {
    let acc = 0;
    for (let i = 0; i < steps.length; i++) {
      acc += steps[i].seconds * 1000;
      if (t < acc) return i;
    }
    return steps.length - 1;
  };
  const gate = new RateGate(() => (o.ramp ? steps[stepAt(performance.now() - t0)].targetRate : null));

  const timed = async (kind: string, fn: () => Promise<{ status: number }>): Promise<boolean> => {
    const start = performance.now();
    let ok = false;
    try {
      const r = await fn();
      ok = r.status >= 200 && r.status < 300;
      if (!ok) failures.set(`${kind}: ${r.status}`, (failures.get(`${kind}: ${r.status}`) ?? 0) + 1);
    } catch (err) {
      const what = `${kind}: ${err instanceof Error ? err.message : String(err)}`.slice(0, 200);
      failures.set(what, (failures.get(what) ?? 0) + 1);
    }
    const end = performance.now();
    if (end <= endAt + 30_000) {
      samples.push({ kind, at: start - t0, ms: end - start, ok, step: stepAt(start - t0) });
    }
    return ok;
  };

  /** An uploading client's turn: a small transfer through the presigned multipart flow, then a render. */
  const uploadCycle = async (c: Client, sideId: string, seq: number) => {
    const bytes = smallTransfer(o.uploadSeconds, seq);
    const sha256 = createHash("sha256").update(bytes).digest("hex");
    let uploadId = "";
    const okUpload = await timed("upload (start, parts, complete)", async () => {
      const start = await c.request("/api/uploads", {
        method: "POST",
        json: { sideId, fileName: `load-${seq}.wav`, bytes: bytes.length },
      });
      if (start.status !== 201) return start;
      const s = JSON.parse(start.body) as {
        uploadId: string;
        partSize: number;
        urls: { partNumber: number; url: string }[];
      };
      uploadId = s.uploadId;
      const parts: { partNumber: number; etag: string }[] = [];
      for (const { partNumber, url } of s.urls) {
        if (!loopback.has(new URL(url).hostname))
          throw new Error(`refused to upload to ${new URL(url).host}`);
        const put = await fetch(url, {
          method: "PUT",
          body: new Uint8Array(bytes.subarray((partNumber - 1) * s.partSize, partNumber * s.partSize)),
        });
        await put.arrayBuffer();
        if (put.status !== 200) return put;
        parts.push({ partNumber, etag: put.headers.get("etag") ?? "" });
      }
      return c.request("/api/uploads/complete", {
        method: "POST",
        json: { uploadId, parts, sha256, bytes: bytes.length, chain: "Load script: generated test signal" },
      });
    });
    if (!okUpload) return;
    let renderId = "";
    const requestedAt = Date.now();
    await timed("render request", async () => {
      const r = await c.request("/api/renders", { method: "POST", json: { sideId, channelMode: "sum" } });
      if (r.status === 202) renderId = (JSON.parse(r.body) as { renderId: string }).renderId;
      return r;
    });
    if (renderId) uploads.push({ sideId, renderId, requestedAt });
  };

  const busySides = new Set<string>();
  const runClient = async (c: Client, index: number) => {
    const only = o.only?.split(",").map((x) => x.trim().toLowerCase());
    const mine = kinds.filter(
      (k) => k.roles.includes(c.role) && (!only || only.some((x) => k.name.toLowerCase().startsWith(x))),
    );
    if (mine.length === 0) return;
    const total = mine.reduce((a, k) => a + k.weight, 0);
    const engineerIndex = roles.slice(0, index).filter((r) => r === "engineer").length;
    const uploadSide = c.role === "engineer" ? world.loadSideIds[engineerIndex] : undefined;
    let seq = index * 100_000;
    let lastUpload = -Infinity;
    await sleep(Math.random() * Math.min(1000, o.pause || 100)); // spread the first requests
    while (performance.now() < endAt && (o.requests === undefined || sent < o.requests)) {
      await gate.turn();
      if (performance.now() >= endAt || (o.requests !== undefined && sent >= o.requests)) break;
      sent++;
      // An uploading client sends a transfer every ~15 s, once its side's last render is done.
      if (uploadSide && performance.now() - lastUpload > 15_000 && !busySides.has(uploadSide)) {
        lastUpload = performance.now();
        busySides.add(uploadSide);
        await uploadCycle(c, uploadSide, ++seq);
      } else {
        let r = Math.random() * total;
        const k = mine.find((x) => (r -= x.weight) < 0) ?? mine[mine.length - 1];
        await timed(k.name, () => k.run(c, world));
      }
      if (!o.ramp && o.pause > 0) await sleep(o.pause);
    }
  };

  // Renders: a side is free for its next upload once its render is no longer queued or running.
  const watchRenders = async () => {
    while (performance.now() < endAt) {
      await sleep(2000);
      for (const sideId of [...busySides]) {
        const pending = uploads.filter((u) => u.sideId === sideId);
        if (pending.length === 0) {
          busySides.delete(sideId);
          continue;
        }
        const last = pending[pending.length - 1];
        const list = await people.engineer
          .json<{ renders: { id: string; status: string }[] }>(`/api/sides/${sideId}/renders`)
          .catch(() => null);
        const r = list?.renders.find((x) => x.id === last.renderId);
        if (r && r.status !== "queued" && r.status !== "running") busySides.delete(sideId);
      }
    }
  };

  const groups = processGroups(o.profileDir);
  const cpuBefore = cpuSnapshot(groups);
  const clientCpuBefore = process.cpuUsage();
  const runStartedAt = Date.now();
  await Promise.all([...clients.map((c, i) => runClient(c, i)), watchRenders()]);
  const runEndedAt = Date.now();
  const cpu = cpuSecondsBetween(cpuBefore, cpuSnapshot(groups));
  const clientCpu = process.cpuUsage(clientCpuBefore);
  cpu["load client"] = (clientCpu.user + clientCpu.system) / 1e6;
  const elapsed = (performance.now() - t0) / 1000;

  // Let the renders asked for finish (bounded by --drain), then read how they went.
  const renderStates = async () => {
    const out: {
      id: string;
      status: string;
      createdAt: string;
      finishedAt: string | null;
      error: string | null;
    }[] = [];
    for (const sideId of new Set(uploads.map((u) => u.sideId))) {
      const list = await people.engineer.json<{ renders: (typeof out)[number][] }>(
        `/api/sides/${sideId}/renders`,
      );
      out.push(...list.renders.filter((r) => uploads.some((u) => u.renderId === r.id)));
    }
    return out;
  };
  let renders = await renderStates();
  const drainUntil = Date.now() + o.drain * 1000;
  while (renders.some((r) => r.status === "queued" || r.status === "running") && Date.now() < drainUntil) {
    await sleep(1000);
    renders = await renderStates();
  }

  // ------------------------------------------------------------------ report
  const pad = (s: string | number, n: number) => String(s).padStart(n);
  const ms = (v: number) => (Number.isNaN(v) ? "-" : v.toFixed(0));
  const summary = summarize(samples);
  const errors = samples.filter((s) => !s.ok).length;
  console.log(
    `\n${samples.length} requests in ${elapsed.toFixed(1)} s (${(samples.length / elapsed).toFixed(1)} per second), ${errors} errors\n`,
  );
  console.log(
    `${"kind".padEnd(34)}${pad("count", 7)}${pad("errors", 8)}${pad("p50 ms", 8)}${pad("p95 ms", 8)}${pad("p99 ms", 8)}${pad("max ms", 8)}`,
  );
  for (const k of summary) {
    console.log(
      `${k.kind.padEnd(34)}${pad(k.count, 7)}${pad(k.errors, 8)}${pad(ms(k.p50), 8)}${pad(ms(k.p95), 8)}${pad(ms(k.p99), 8)}${pad(ms(k.max), 8)}`,
    );
  }
  const all = samples.map((s) => s.ms);
  console.log(
    "all".padEnd(34) +
      pad(samples.length, 7) +
      pad(errors, 8) +
      [50, 95, 99].map((q) => pad(ms(percentile(all, q)), 8)).join(""),
  );
  if (failures.size > 0) {
    console.log("\nErrors:");
    for (const [what, n] of failures) console.log(`  ${n} × ${what}`);
  }

  const done = renders.filter((r) => r.status === "done");
  const doneInRun = done.filter((r) => r.finishedAt && Date.parse(r.finishedAt) <= runEndedAt);
  const failed = renders.filter((r) => r.status === "failed");
  const turnaround = done
    .filter((r) => r.finishedAt)
    .map((r) => (Date.parse(r.finishedAt!) - Date.parse(r.createdAt)) / 1000);
  console.log(
    `\nRenders: ${uploads.length} asked for, ${doneInRun.length} finished during the run ` +
      `(${((doneInRun.length / Math.max(1, runEndedAt - runStartedAt)) * 60_000).toFixed(1)} per minute), ` +
      `${done.length - doneInRun.length} after it, ${failed.length} failed, ` +
      `${renders.length - done.length - failed.length} still queued or running; ` +
      `request to access copy p50 ${percentile(turnaround, 50).toFixed(1)} s, max ${turnaround.length ? Math.max(...turnaround).toFixed(1) : "-"} s.`,
  );
  for (const f of failed) console.log(`  failed: ${f.error ?? "(no error recorded)"}`);

  console.log(
    `\nCPU during the run (s, and ms per request): ` +
      Object.entries(cpu)
        .map(
          ([g, sec]) => `${g} ${sec.toFixed(1)} (${((sec * 1000) / Math.max(1, samples.length)).toFixed(1)})`,
        )
        .join(", ") +
      (groups.app === undefined
        ? ` (no PID files under ${o.profileDir}: the lab's own processes not counted)`
        : ""),
  );

  let saturation = null;
  if (o.ramp) {
    const stepRows = stepSummaries(samples, steps);
    console.log(`\nRamp (p95 limit ${o.limit} ms):`);
    console.log(
      `${pad("step", 5)}${pad("target/s", 10)}${pad("reached/s", 11)}${pad("requests", 10)}${pad("errors", 8)}${pad("p95 ms", 8)}`,
    );
    for (const s of stepRows) {
      console.log(
        `${pad(s.step + 1, 5)}${pad(s.targetRate, 10)}${pad(s.achievedRate.toFixed(1), 11)}${pad(s.requests, 10)}${pad(s.errors, 8)}${pad(ms(s.p95), 8)}`,
      );
    }
    saturation = saturationPoint(stepRows, o.limit);
    if (saturation?.kind === "reached")
      console.log(
        `Saturation point: ${saturation.rate.toFixed(0)} requests per second (p95 passes ${o.limit} ms).`,
      );
    else if (saturation?.kind === "at or below first step")
      console.log(
        `Saturation point: at or below ${saturation.rate.toFixed(0)} requests per second (the first step already passed ${o.limit} ms).`,
      );
    else if (saturation)
      console.log(
        `Saturation point: not reached; the highest rate was ${saturation.highestRate.toFixed(0)} ` +
          `requests per second with p95 ${saturation.p95AtHighest.toFixed(0)} ms (try more clients or a longer ramp).`,
      );
  }

  if (o.json) {
    const { writeFile } = await import("node:fs/promises");
    await writeFile(
      o.json,
      JSON.stringify(
        { options: o, elapsed, summary, errors, renders, saturation, failures: Object.fromEntries(failures) },
        null,
        2,
      ),
    );
  }
  if (errors > 0 || failed.length > 0) process.exitCode = 1;
}

main().catch((err: unknown) => {
  console.error(err instanceof Error ? err.message : String(err));
  process.exit(2);
});
