// The two commands' driver: `start` (demo), `stop`, `dev` and `test`. See scripts/lib/stack.ts.
import { spawn } from "node:child_process";
import { promises as fs } from "node:fs";
import path from "node:path";
import { demoAccounts } from "./seed/demo-accounts";
import {
  build,
  log,
  profile,
  root,
  runTsx,
  startApp,
  startServices,
  startWorker,
  stopAll,
} from "./lib/stack";

async function prepare(name: "demo" | "test") {
  const p = profile(name);
  const env = await startServices(p);
  await runTsx("scripts/migrate.ts", [], env);
  await runTsx("scripts/seed.ts", [], env);
  return { p, env };
}

async function start(): Promise<void> {
  const { p, env } = await prepare("demo");
  await build(env);
  await startWorker(p, env);
  await startApp(p, env);
  console.log(`\nRillbook is serving at ${env.APP_URL}\n`);
  console.log("Demo sign-ins:");
  for (const a of demoAccounts) console.log(`  ${a.role.padEnd(10)} ${a.email.padEnd(34)} ${a.password}`);
  console.log(
    `\nMail sent by the app lands in ${path.relative(root, env.MAIL_SINK_DIR ?? "")} (admins also see it on the Outbox page).`,
  );
  console.log("Stop everything with: npm run stop\n");
}

async function dev(): Promise<void> {
  const { p, env } = await prepare("demo");
  await startWorker(p, env);
  const child = spawn(
    process.execPath,
    ["node_modules/next/dist/bin/next", "dev", "-H", "127.0.0.1", "-p", String(p.appPort)],
    {
      cwd: root,
      env: { ...env, NEXT_DIST_DIR: ".next-dev" },
      stdio: "inherit",
    },
  );
  child.on("close", (code) => process.exit(code ?? 0));
}

/** Runs vitest; prints a closing "tests: N passed, N failed" line from its JSON report. */
async function vitest(env: NodeJS.ProcessEnv, args: string[]): Promise<number> {
  const report = path.join(profile("test").dir, "vitest-report.json");
  const code = await new Promise<number>((resolve) => {
    const child = spawn(
      process.execPath,
      [
        "node_modules/vitest/vitest.mjs",
        "run",
        "--reporter=default",
        "--reporter=json",
        `--outputFile.json=${report}`,
        ...args,
      ],
      {
        cwd: root,
        env,
        stdio: "inherit",
      },
    );
    child.on("close", (c) => resolve(c ?? 1));
  });
  try {
    const r = JSON.parse(await fs.readFile(report, "utf8")) as {
      numPassedTests: number;
      numFailedTests: number;
      numPendingTests: number;
    };
    console.log(
      `\ntests: ${r.numPassedTests} passed, ${r.numFailedTests} failed, ${r.numPendingTests} skipped`,
    );
  } catch {
    console.log("\ntests: no report was written");
  }
  return code;
}

/** Runs an npm script of package.json; resolves with its exit code. */
function npmScript(name: string): Promise<number> {
  return new Promise<number>((resolve) => {
    const child = spawn("npm", ["run", "--silent", name], { cwd: root, stdio: "inherit" });
    child.on("close", (c) => resolve(c ?? 1));
  });
}

/** ESLint and Prettier over the tree: both run, so one run shows every finding. */
async function checks(): Promise<boolean> {
  log("lint (ESLint) and format:check (Prettier)");
  const lint = await npmScript("lint");
  const format = await npmScript("format:check");
  if (lint !== 0) log("lint found problems: fix them (`npm run lint`)");
  if (format !== 0) log("format:check found unformatted files: run `npm run format`");
  return lint === 0 && format === 0;
}

async function test(args: string[]): Promise<number> {
  if (!(await checks())) return 1;
  const p = profile("test");
  await stopAll(p); // leftovers of an interrupted run
  await fs.rm(p.dir, { recursive: true, force: true });
  try {
    const { env } = await prepare("test");
    await build(env);
    await startWorker(p, env);
    await startApp(p, env);
    return await vitest({ ...env, NODE_ENV: "test" }, args);
  } finally {
    await stopAll(p);
  }
}

async function main(): Promise<void> {
  const [command, ...rest] = process.argv.slice(2);
  switch (command) {
    case "start":
      return start();
    case "stop":
      return stopAll(profile("demo"));
    case "dev":
      return dev();
    case "test":
      process.exitCode = await test(rest);
      return;
    default:
      throw new Error(`unknown command ${command ?? ""}: use start, stop, dev or test`);
  }
}

main().catch((err) => {
  log(err instanceof Error ? err.message : String(err));
  process.exit(1);
});
