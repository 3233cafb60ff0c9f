// Starts and stops Rillbook's loopback services for one profile (demo or test):
// a private PostgreSQL cluster, s3rver, the SMTP sink, the worker and the web app.
// Every process it starts is recorded by PID in storage/<profile>/run so that
// `npm run stop` (and the test command) stop exactly what they started.
import { spawn } from "node:child_process";
import { randomBytes } from "node:crypto";
import { existsSync, promises as fs, openSync, readdirSync, statSync } from "node:fs";
import net from "node:net";
import path from "node:path";
import { fileURLToPath } from "node:url";
import pg from "pg";
import { reassignOwnershipSql } from "../../db/roles";
import {
  appRole,
  dbName,
  demoPgPort,
  localRoleUrls,
  ownerRole,
  type RoleSecrets,
  readRoleSecrets,
  rolesFile,
} from "./local-roles";

export const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");

export type ProfileName = "demo" | "test";

export interface Profile {
  name: ProfileName;
  pgPort: number;
  s3Port: number;
  smtpPort: number;
  appPort: number;
  distDir: string;
  dir: string;
  /** The demo honours external service URLs from the environment (production); tests never do. */
  honourExternal: boolean;
}

export const profiles: Record<ProfileName, Omit<Profile, "dir">> = {
  demo: {
    name: "demo",
    pgPort: demoPgPort,
    s3Port: 54321,
    smtpPort: 54325,
    appPort: 3000,
    distDir: ".next",
    honourExternal: true,
  },
  test: {
    name: "test",
    pgPort: 55420,
    s3Port: 55421,
    smtpPort: 55425,
    appPort: 3100,
    distDir: ".next-test",
    honourExternal: false,
  },
};

/**
 * RILLBOOK_TEST_PORT_OFFSET moves every port of the test profile by that much, so two
 * checkouts on one machine can each run their own test stack at the same time.
 */
function testPortOffset(): number {
  const raw = process.env.RILLBOOK_TEST_PORT_OFFSET;
  if (!raw) return 0;
  const n = Number(raw);
  if (!Number.isInteger(n) || n < 0 || n > 900)
    throw new Error(`RILLBOOK_TEST_PORT_OFFSET must be a whole number from 0 to 900, not "${raw}"`);
  return n;
}

export function profile(name: ProfileName): Profile {
  const base = profiles[name];
  const offset = name === "test" ? testPortOffset() : 0;
  return {
    ...base,
    pgPort: base.pgPort + offset,
    s3Port: base.s3Port + offset,
    smtpPort: base.smtpPort + offset,
    appPort: base.appPort + offset,
    dir: path.join(root, "storage", name),
  };
}

const isRoot = typeof process.getuid === "function" && process.getuid() === 0;

export function log(message: string): void {
  console.log(`[rillbook] ${message}`);
}

// ---------------------------------------------------------------- processes

function run(
  cmd: string,
  args: string[],
  opts: { env?: NodeJS.ProcessEnv; quiet?: boolean; asPostgres?: boolean } = {},
): Promise<{ code: number; output: string }> {
  const [file, argv] =
    opts.asPostgres && isRoot ? ["runuser", ["-u", "postgres", "--", cmd, ...args]] : [cmd, args];
  return new Promise((resolve, reject) => {
    const child = spawn(file, argv, {
      cwd: root,
      env: opts.env ?? process.env,
      stdio: opts.quiet ? ["ignore", "pipe", "pipe"] : "inherit",
    });
    let output = "";
    child.stdout?.on("data", (d) => (output += d));
    child.stderr?.on("data", (d) => (output += d));
    child.on("error", reject);
    child.on("close", (code) => resolve({ code: code ?? 1, output }));
  });
}

async function mustRun(cmd: string, args: string[], opts: Parameters<typeof run>[2] = {}): Promise<string> {
  const { code, output } = await run(cmd, args, opts);
  if (code !== 0) throw new Error(`${path.basename(cmd)} ${args.join(" ")} failed (exit ${code})\n${output}`);
  return output;
}

export function pidFile(p: Profile, name: string): string {
  return path.join(p.dir, "run", `${name}.pid`);
}

export function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
}

async function readPid(p: Profile, name: string): Promise<number | null> {
  try {
    const pid = Number((await fs.readFile(pidFile(p, name), "utf8")).trim());
    return Number.isInteger(pid) && pid > 0 && alive(pid) ? pid : null;
  } catch {
    return null;
  }
}

export function portOpen(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ host: "127.0.0.1", port });
    socket.setTimeout(500);
    socket.once("connect", () => {
      socket.destroy();
      resolve(true);
    });
    socket.once("timeout", () => {
      socket.destroy();
      resolve(false);
    });
    socket.once("error", () => resolve(false));
  });
}

async function waitFor(
  what: string,
  check: () => Promise<boolean>,
  timeoutMs: number,
  logFile?: string,
): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (await check()) return;
    await new Promise((r) => setTimeout(r, 200));
  }
  const tail = logFile
    ? `\n--- last lines of ${logFile} ---\n${(await fs.readFile(logFile, "utf8").catch(() => "")).split("\n").slice(-30).join("\n")}`
    : "";
  throw new Error(`${what} did not come up within ${timeoutMs / 1000} s${tail}`);
}

/** Starts a long-running node process in its own process group, output to storage/<profile>/logs. */
async function startDetached(
  p: Profile,
  name: string,
  args: string[],
  env: NodeJS.ProcessEnv,
): Promise<number> {
  await fs.mkdir(path.join(p.dir, "run"), { recursive: true });
  await fs.mkdir(path.join(p.dir, "logs"), { recursive: true });
  const logFile = path.join(p.dir, "logs", `${name}.log`);
  const fd = openSync(logFile, "a");
  const child = spawn(process.execPath, args, { cwd: root, env, detached: true, stdio: ["ignore", fd, fd] });
  child.unref();
  if (!child.pid) throw new Error(`could not start ${name}`);
  await fs.writeFile(pidFile(p, name), String(child.pid));
  return child.pid;
}

async function stopPid(p: Profile, name: string): Promise<boolean> {
  const pid = await readPid(p, name);
  await fs.rm(pidFile(p, name), { force: true });
  if (!pid) return false;
  try {
    process.kill(-pid, "SIGTERM"); // the whole group: next start forks workers
  } catch {
    try {
      process.kill(pid, "SIGTERM");
    } catch {
      return false;
    }
  }
  const deadline = Date.now() + 10_000;
  while (alive(pid) && Date.now() < deadline) await new Promise((r) => setTimeout(r, 100));
  if (alive(pid)) {
    try {
      process.kill(-pid, "SIGKILL");
    } catch {
      /* already gone */
    }
  }
  return true;
}

// ---------------------------------------------------------------- PostgreSQL

function postgresBinDir(): string {
  const base = "/usr/lib/postgresql";
  const versions = existsSync(base)
    ? readdirSync(base).filter((v) => existsSync(path.join(base, v, "bin", "initdb")))
    : [];
  versions.sort((a, b) => Number(b) - Number(a));
  if (!versions[0])
    throw new Error(
      "PostgreSQL server binaries not found in /usr/lib/postgresql: install Debian's postgresql package",
    );
  return path.join(base, versions[0], "bin");
}

/** postgres must be able to traverse every parent of its data folder. */
async function openParentsForPostgres(dir: string): Promise<void> {
  if (!isRoot) return;
  let d = path.dirname(dir);
  while (d !== path.dirname(d)) {
    const mode = statSync(d).mode;
    if ((mode & 0o001) === 0) {
      log(`allowing the postgres user to pass through ${d} (adds o+x)`);
      await fs.chmod(d, mode | 0o001);
    }
    d = path.dirname(d);
  }
}

/**
 * The cluster's bootstrap superuser: "postgres" for clusters made now, "rillbook" for
 * those an earlier version made (it was also the app's role then). It is reached only
 * through the socket inside the data folder, never over TCP.
 */
const superusers = ["postgres", "rillbook"];

async function roleSecretsFor(p: Profile): Promise<RoleSecrets> {
  const existing = readRoleSecrets(p.dir);
  if (existing) return existing;
  const secrets = {
    owner: randomBytes(24).toString("base64url"),
    app: randomBytes(24).toString("base64url"),
  };
  await fs.mkdir(p.dir, { recursive: true });
  await fs.writeFile(rolesFile(p.dir), JSON.stringify(secrets), { mode: 0o600 });
  return secrets;
}

/** A superuser session over the cluster's own socket (trust: only its OS user and root reach it). */
async function superuserClient(p: Profile, database: string): Promise<{ client: pg.Client; user: string }> {
  let last: unknown;
  for (const user of superusers) {
    const client = new pg.Client({ host: path.join(p.dir, "pg"), port: p.pgPort, user, database });
    try {
      await client.connect();
      return { client, user };
    } catch (err) {
      last = err;
      await client.end().catch(() => undefined);
    }
  }
  throw new Error(`could not reach the local PostgreSQL as its superuser: ${String(last)}`);
}

/**
 * Creates (or brings up to date) the owner and app roles and the database, and hands
 * everything in the database to the owner. A cluster made by an earlier version, where
 * one superuser owned everything and the app connected as it, is upgraded in place: its
 * objects are reassigned and that superuser loses its well-known password.
 */
async function ensureRoles(p: Profile, secrets: RoleSecrets): Promise<void> {
  const { client, user } = await superuserClient(p, "postgres");
  try {
    const roles: [string, string, string][] = [
      [ownerRole, secrets.owner, "CREATEDB"], // CREATEDB only for the catalogue benchmark's side database
      [appRole, secrets.app, "NOCREATEDB NOINHERIT"],
    ];
    for (const [role, password, extra] of roles) {
      const { rowCount } = await client.query("SELECT 1 FROM pg_roles WHERE rolname = $1", [role]);
      const attrs = `LOGIN NOSUPERUSER NOCREATEROLE NOREPLICATION NOBYPASSRLS ${extra} PASSWORD ${client.escapeLiteral(password)}`;
      if (rowCount) await client.query(`ALTER ROLE ${client.escapeIdentifier(role)} WITH ${attrs}`);
      else {
        await client.query(`CREATE ROLE ${client.escapeIdentifier(role)} WITH ${attrs}`);
        log(`created the database role ${role}`);
      }
    }
    const { rows } = await client.query<{ owner: string }>(
      "SELECT pg_get_userbyid(datdba) AS owner FROM pg_database WHERE datname = $1",
      [dbName],
    );
    if (!rows.length) await client.query(`CREATE DATABASE ${dbName} OWNER ${ownerRole}`);
    else if (rows[0].owner !== ownerRole) {
      log(`upgrading the database to two roles: ${ownerRole} now owns it, the app connects as ${appRole}`);
      await client.query(`ALTER DATABASE ${dbName} OWNER TO ${ownerRole}`);
    }
    await client.query(`REVOKE ALL ON DATABASE ${dbName} FROM PUBLIC`);
    await client.query(`GRANT CONNECT, TEMPORARY ON DATABASE ${dbName} TO ${appRole}`);
    // The superuser of an earlier version's cluster was the app's login: close it.
    if (user === "rillbook") await client.query("ALTER ROLE rillbook WITH PASSWORD NULL");
  } finally {
    await client.end();
  }
  const { client: db } = await superuserClient(p, dbName);
  try {
    await db.query(reassignOwnershipSql(ownerRole));
  } finally {
    await db.end();
  }
}

export async function startPostgres(p: Profile): Promise<void> {
  const bin = postgresBinDir();
  const data = path.join(p.dir, "pg");
  await fs.mkdir(data, { recursive: true });
  await openParentsForPostgres(data);
  if (isRoot) await mustRun("chown", ["-R", "postgres:postgres", data]);
  await fs.chmod(data, 0o700);

  if (!existsSync(path.join(data, "PG_VERSION"))) {
    log(`initialising a PostgreSQL cluster in ${path.relative(root, data)}`);
    // The superuser has no password: it is reached only through the socket in the data folder.
    await mustRun(
      path.join(bin, "initdb"),
      [
        "-D",
        data,
        "-U",
        "postgres",
        "--auth-local=trust",
        "--auth-host=scram-sha-256",
        "-E",
        "UTF8",
        "--locale=C.UTF-8",
      ],
      { asPostgres: true, quiet: true },
    );
  }

  const status = await run(path.join(bin, "pg_ctl"), ["-D", data, "status"], {
    asPostgres: true,
    quiet: true,
  });
  if (status.code === 0) {
    log(`PostgreSQL already running on 127.0.0.1:${p.pgPort}`);
  } else {
    if (await portOpen(p.pgPort))
      throw new Error(`port ${p.pgPort} is held by another program; stop it or free the port`);
    await mustRun(
      path.join(bin, "pg_ctl"),
      [
        "-D",
        data,
        "-l",
        path.join(data, "server.log"),
        "-w",
        "-o",
        `-c listen_addresses=127.0.0.1 -p ${p.pgPort} -k ${data}`,
        "start",
      ],
      { asPostgres: true, quiet: true },
    );
    log(`PostgreSQL started on 127.0.0.1:${p.pgPort}`);
  }

  await ensureRoles(p, await roleSecretsFor(p));
}

export async function stopPostgres(p: Profile): Promise<void> {
  const data = path.join(p.dir, "pg");
  if (!existsSync(path.join(data, "PG_VERSION"))) return;
  const bin = postgresBinDir();
  const status = await run(path.join(bin, "pg_ctl"), ["-D", data, "status"], {
    asPostgres: true,
    quiet: true,
  });
  if (status.code === 0) {
    await mustRun(path.join(bin, "pg_ctl"), ["-D", data, "-m", "fast", "-w", "stop"], {
      asPostgres: true,
      quiet: true,
    });
    log("PostgreSQL stopped");
  }
}

// ---------------------------------------------------------------- node services

async function startNodeService(
  p: Profile,
  name: string,
  port: number,
  script: string,
  env: NodeJS.ProcessEnv,
): Promise<void> {
  if (await readPid(p, name)) {
    if (await portOpen(port)) {
      log(`${name} already running on 127.0.0.1:${port}`);
      return;
    }
    await stopPid(p, name);
  }
  if (await portOpen(port))
    throw new Error(
      `port ${port} is held by another program; stop it or free the port before starting ${name}`,
    );
  await startDetached(p, name, ["--import", "tsx", script], env);
  await waitFor(
    `${name} on port ${port}`,
    () => portOpen(port),
    20_000,
    path.join(p.dir, "logs", `${name}.log`),
  );
  log(`${name} started on 127.0.0.1:${port}`);
}

// ---------------------------------------------------------------- environment

async function secretFor(p: Profile): Promise<string> {
  const file = path.join(p.dir, "auth-secret");
  try {
    return (await fs.readFile(file, "utf8")).trim();
  } catch {
    const secret = randomBytes(32).toString("base64url");
    await fs.mkdir(p.dir, { recursive: true });
    await fs.writeFile(file, secret, { mode: 0o600 });
    return secret;
  }
}

export interface StackEnv extends NodeJS.ProcessEnv {
  DATABASE_URL: string;
  DATABASE_OWNER_URL?: string;
  APP_URL: string;
}

/**
 * The test profile's render lease is short, so a fault drill (tests/integration/faults.test.ts) sees a dead worker's render
 * taken up again within seconds; the demo and production keep lib/jobs/render-lease.ts's defaults
 * (renew every 10 s, stale after 90 s, swept every 30 s).
 */
const testLease = {
  RENDER_HEARTBEAT_SECONDS: "2",
  RENDER_LEASE_STALE_SECONDS: "15",
  RENDER_SWEEP_SECONDS: "5",
};

/** The environment the app, worker, scripts and tests of a profile run with. */
export async function stackEnv(p: Profile): Promise<StackEnv> {
  const external = (key: string) => (p.honourExternal ? process.env[key] : undefined);
  const appUrl = external("APP_URL") ?? `http://127.0.0.1:${p.appPort}`;
  const externalDb = external("DATABASE_URL");
  const local = externalDb ? null : localRoleUrls(p.pgPort, await roleSecretsFor(p));
  const ownerUrl = externalDb ? process.env.DATABASE_OWNER_URL : local!.owner;
  const { DATABASE_OWNER_URL: _ignored, ...inherited } = process.env;
  return {
    ...inherited,
    NEXT_TELEMETRY_DISABLED: "1",
    NEXT_DIST_DIR: p.distDir,
    DATABASE_URL: externalDb ?? local!.app,
    ...(ownerUrl ? { DATABASE_OWNER_URL: ownerUrl } : {}),
    S3_ENDPOINT: external("S3_ENDPOINT") ?? `http://127.0.0.1:${p.s3Port}`,
    S3_BUCKET: external("S3_BUCKET") ?? "rillbook",
    S3_ACCESS_KEY_ID: external("S3_ENDPOINT") ? process.env.S3_ACCESS_KEY_ID : "S3RVER",
    S3_SECRET_ACCESS_KEY: external("S3_ENDPOINT") ? process.env.S3_SECRET_ACCESS_KEY : "S3RVER",
    SMTP_URL: external("SMTP_URL") ?? `smtp://127.0.0.1:${p.smtpPort}`,
    APP_URL: appUrl,
    NEXTAUTH_URL: appUrl,
    NEXTAUTH_SECRET: external("NEXTAUTH_SECRET") ?? (await secretFor(p)),
    MAIL_SINK_DIR: path.join(p.dir, "mail"),
    RILLBOOK_PROFILE: p.name,
    ...(p.name === "test" ? testLease : {}),
  };
}

// ---------------------------------------------------------------- the stack

/**
 * Starts the profile's s3rver on its port and data folder (nothing if it already runs);
 * the bucket fault drills (tests/integration/faults-bucket.test.ts) start it again with
 * this after killing it by its PID.
 */
export async function startS3rver(p: Profile, env: StackEnv): Promise<void> {
  await startNodeService(p, "s3rver", p.s3Port, "scripts/services/s3.ts", {
    ...env,
    S3_PORT: String(p.s3Port),
    S3_DIR: path.join(p.dir, "s3"),
    APP_ORIGIN: new URL(env.APP_URL).origin,
  });
}

export async function startServices(p: Profile): Promise<StackEnv> {
  await fs.mkdir(p.dir, { recursive: true });
  const env = await stackEnv(p);
  const externalDb = p.honourExternal && process.env.DATABASE_URL;
  const externalS3 = p.honourExternal && process.env.S3_ENDPOINT;
  const externalSmtp = p.honourExternal && process.env.SMTP_URL;

  if (externalDb) log("DATABASE_URL given: using that PostgreSQL, not starting one");
  else await startPostgres(p);

  if (externalS3) log("S3_ENDPOINT given: using that storage, not starting s3rver");
  else await startS3rver(p, env);

  if (externalSmtp) log("SMTP_URL given: sending through that server, not starting the sink");
  else
    await startNodeService(p, "mail-sink", p.smtpPort, "scripts/services/mail-sink.ts", {
      ...env,
      SMTP_PORT: String(p.smtpPort),
      MAIL_DIR: path.join(p.dir, "mail"),
    });
  return env;
}

export async function runTsx(script: string, args: string[], env: NodeJS.ProcessEnv): Promise<void> {
  await mustRun(process.execPath, ["--import", "tsx", script, ...args], { env });
}

export async function build(env: NodeJS.ProcessEnv): Promise<void> {
  log(`building the app into ${env.NEXT_DIST_DIR}`);
  await mustRun(process.execPath, ["node_modules/next/dist/bin/next", "build"], { env });
}

/** Where the supervisor writes the PID of the worker it runs now (worker.pid is the supervisor's). */
export function workerChildPidFile(p: Profile): string {
  return pidFile(p, "worker-child");
}

/**
 * Starts the worker under its supervisor (scripts/supervise-worker.ts), which starts it
 * again, after a back-off, whenever it exits and logs why. worker.pid records the
 * supervisor; the worker is its child in the same process group, so stopping the group
 * stops both.
 */
export async function startWorker(p: Profile, env: NodeJS.ProcessEnv): Promise<void> {
  await stopPid(p, "worker");
  await startDetached(p, "worker", ["--import", "tsx", "scripts/supervise-worker.ts"], {
    ...env,
    WORKER_CHILD_PID_FILE: workerChildPidFile(p),
  });
  log("worker started (supervised)");
}

export async function startApp(p: Profile, env: StackEnv): Promise<void> {
  await stopPid(p, "app");
  if (await portOpen(p.appPort))
    throw new Error(`port ${p.appPort} is held by another program; free it before starting Rillbook`);
  await startDetached(
    p,
    "app",
    ["node_modules/next/dist/bin/next", "start", "-H", "127.0.0.1", "-p", String(p.appPort)],
    env,
  );
  const health = `http://127.0.0.1:${p.appPort}/api/health`;
  await waitFor(
    `the app on port ${p.appPort}`,
    async () => {
      try {
        return (await fetch(health)).status < 500;
      } catch {
        return false;
      }
    },
    60_000,
    path.join(p.dir, "logs", "app.log"),
  );
  log(`app serving on ${env.APP_URL}`);
}

export async function stopAll(p: Profile): Promise<void> {
  for (const name of ["app", "worker", "mail-sink", "s3rver"]) {
    if (await stopPid(p, name)) log(`${name} stopped`);
  }
  await stopPostgres(p);
}
