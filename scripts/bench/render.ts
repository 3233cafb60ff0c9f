/**
 * Throughput and memory of the access-copy render. Prints figures only.
 *
 *   npx tsx scripts/bench/render.ts                 # 10 minutes of 96 kHz 24-bit stereo
 *   BENCH_MINUTES=120 npx tsx scripts/bench/render.ts
 *
 * Generates a flat transfer (noise + tones) in a temporary folder, renders it
 * through the RIAA render filter with Rillbook's renderer (filter, measure the
 * peak, trim, 24-bit TPDF-dithered output, SHA-256) in a child process, so the
 * peak RSS printed is the render's own, and runs sox's `fir` effect with the
 * same taps single-threaded on the same file (one pass, no peak measurement,
 * no delay compensation), and sox's `biquad` with the curve's IIR sections, for
 * comparison; all pinned to one CPU. Then renders
 * the file again under a lower ceiling, so that it needs a trim (two passes),
 * and prints that too (the filtered signal kept as the render keeps it by default,
 * in its working file; then kept in memory, and filtered again, for comparison),
 * and once more with the JavaScript engine, to measure what the native one gains.
 * The native engine's FFTW plans for the filter's size are made (or read from the
 * wisdom file) before the timed renders, as a worker has them after its first render. Beside the wall times it prints the CPU time each run
 * took (user + system, from the process itself or bash's `times`): on a machine
 * other work shares, that is the steadier figure. All files are removed afterwards.
 */
import { spawn, execFile } from "node:child_process";
import { mkdtemp, rm, stat, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { promisify } from "node:util";
import { BwfWriter, openFileSource, readWavHeader, renderAccessCopy } from "../../lib/audio";
import { jsDsp, nativeDsp } from "../../lib/audio/dsp";
import { designIir, designRenderFilter, RIAA_SPEC } from "../../lib/curves";

const RATE_HZ = 96_000;
const run = promisify(execFile);

async function child(
  input: string,
  output: string,
  ceilingDbfs: number,
  engine: string,
  keepFiltered: "auto" | "memory" | "never",
): Promise<void> {
  const t0 = performance.now();
  const source = await openFileSource(input);
  const header = await readWavHeader(source);
  const filter = designRenderFilter(RIAA_SPEC, header.sampleRateHz);
  const t1 = performance.now();
  const cpu0 = process.cpuUsage();
  const result = await renderAccessCopy({
    source,
    header,
    filter,
    outputPath: output,
    ceilingDbfs,
    dsp: engine === "js" ? jsDsp : undefined,
    keepFiltered,
  });
  const cpu = process.cpuUsage(cpu0);
  const t2 = performance.now();
  await source.close();
  const { readFileSync } = await import("node:fs");
  const status = readFileSync("/proc/self/status", "utf8");
  const hwm = /VmHWM:\s+(\d+)\s+kB/.exec(status);
  process.stdout.write(
    JSON.stringify({
      designMs: t1 - t0,
      renderMs: t2 - t1,
      cpuMs: (cpu.user + cpu.system) / 1000,
      frames: result.frames,
      trimDb: result.trimDb,
      peakDbfs: result.peakDbfs,
      clippedSamples: result.clippedSamples,
      taps: filter.taps.length,
      engine: result.engine,
      filteredAgain: result.secondPass?.filteredFrames ?? null,
      readBack: result.secondPass?.readBackFrames ?? null,
      fromFile: result.secondPass?.fromFileFrames ?? null,
      maxRssKb: process.resourceUsage().maxRSS,
      vmHwmKb: hwm ? Number(hwm[1]) : null,
    }),
  );
}

async function generate(path: string, frames: number): Promise<void> {
  const w = await BwfWriter.create(path, {
    sampleRateHz: RATE_HZ,
    channels: 2,
    encoding: { format: "pcm", bitsPerSample: 24 },
    bext: { description: "Rillbook render benchmark" },
  });
  const chunk = 1 << 16;
  let seed = 12345;
  const noise = () => {
    seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
    return seed / 4294967296 - 0.5;
  };
  const l = new Float64Array(chunk);
  const r = new Float64Array(chunk);
  for (let start = 0; start < frames; start += chunk) {
    const n = Math.min(chunk, frames - start);
    for (let i = 0; i < n; i++) {
      const t = (start + i) / RATE_HZ;
      l[i] = 0.05 * noise() + 0.03 * Math.sin(2 * Math.PI * 60 * t) + 0.02 * Math.sin(2 * Math.PI * 3150 * t);
      r[i] =
        0.05 * noise() + 0.03 * Math.sin(2 * Math.PI * 440 * t) + 0.01 * Math.sin(2 * Math.PI * 12_000 * t);
    }
    await w.write([l, r], n);
  }
  await w.close();
}

/** Both renderers run pinned to one CPU (taskset, util-linux) so "on one core" holds for every thread they start. */
async function pinnedCommand(): Promise<string[]> {
  try {
    await run("taskset", ["-c", "0", "true"]);
    return ["taskset", "-c", "0"];
  } catch {
    return [];
  }
}

function runChild(
  pin: string[],
  input: string,
  output: string,
  ceilingDbfs = 0,
  engine = "default",
  keepFiltered = "auto",
): Promise<{ wallMs: number; report: Record<string, number | string | null> }> {
  const self = fileURLToPath(import.meta.url);
  const t0 = performance.now();
  const argv = [
    ...pin,
    process.execPath,
    "--import",
    "tsx",
    self,
    "--child",
    input,
    output,
    String(ceilingDbfs),
    engine,
    keepFiltered,
  ];
  return new Promise((resolve, reject) => {
    const p = spawn(argv[0], argv.slice(1), { stdio: ["ignore", "pipe", "inherit"] });
    let out = "";
    p.stdout.on("data", (d: Buffer) => (out += d.toString()));
    p.on("error", reject);
    p.on("close", (code) => {
      if (code !== 0) reject(new Error(`render child exited with ${code}`));
      else
        resolve({
          wallMs: performance.now() - t0,
          report: JSON.parse(out) as Record<string, number | string | null>,
        });
    });
  });
}

async function main(): Promise<void> {
  const minutes = Number(process.env.BENCH_MINUTES ?? 10);
  if (!(minutes > 0)) throw new Error("BENCH_MINUTES must be a positive number.");
  const frames = Math.round(minutes * 60 * RATE_HZ);
  const dir = await mkdtemp(join(tmpdir(), "rillbook-bench-"));
  try {
    const input = join(dir, "flat.wav");
    const output = join(dir, "access.wav");
    const soxOut = join(dir, "sox.wav");
    const tapsFile = join(dir, "taps.txt");
    console.log(
      `render benchmark (node ${process.version}, sox ${(await run("sox", ["--version"])).stdout.trim().replace(/^sox:\s*/, "")})`,
    );
    console.log(`input: ${minutes} min, ${RATE_HZ} Hz, 24-bit stereo = ${frames} frames`);
    let t = performance.now();
    await generate(input, frames);
    console.log(
      `generated ${((await stat(input)).size / 1e9).toFixed(3)} GB in ${((performance.now() - t) / 1000).toFixed(1)} s`,
    );

    const filter = designRenderFilter(RIAA_SPEC, RATE_HZ);
    await writeFile(tapsFile, `${Array.from(filter.taps, (v) => v.toPrecision(17)).join("\n")}\n`);

    // The plans a worker has after its first render: measured now if the wisdom file lacks them.
    t = performance.now();
    nativeDsp()?.filter(filter.taps, 2);
    console.log(`FFTW plans for the filter's size ready in ${((performance.now() - t) / 1000).toFixed(2)} s`);

    const pin = await pinnedCommand();
    console.log(
      pin.length
        ? "both renders pinned to CPU 0 (taskset -c 0)"
        : "taskset not found: renders not pinned to one CPU",
    );
    const { wallMs, report } = await runChild(pin, input, output);
    const samples = frames * 2;
    const renderS = (report.renderMs as number) / 1000;
    const ours = samples / renderS;
    await rm(output, { force: true });

    t = performance.now();
    const soxCpuS = await timedSox(pin, [input, "-b", "24", soxOut, "fir", tapsFile]);
    const soxS = (performance.now() - t) / 1000;
    const theirs = samples / soxS;
    await rm(soxOut, { force: true });

    // The same curve as IIR sections through sox's biquad, one effect per section.
    const sections = designIir(RIAA_SPEC, RATE_HZ).sos;
    const biquadArgv = [
      ...pin,
      "sox",
      "--single-threaded",
      input,
      "-b",
      "24",
      soxOut,
      ...sections.flatMap((row) => ["biquad", ...row.map((v) => v.toPrecision(17))]),
    ];
    t = performance.now();
    await run(biquadArgv[0], biquadArgv.slice(1), { maxBuffer: 1 << 20 });
    const biquadS = (performance.now() - t) / 1000;
    await rm(soxOut, { force: true });

    const audioS = frames / RATE_HZ;
    const mb = (kb: number | string | null) =>
      typeof kb !== "number" ? "n/a" : `${(kb / 1024).toFixed(0)} MiB`;
    console.log(
      `RIAA render filter: ${report.taps} taps; trim ${(report.trimDb as number).toFixed(2)} ` +
        `dB (${report.trimDb === 0 ? "one pass" : "two passes"}); clipped ${report.clippedSamples}`,
    );
    console.log(
      `Rillbook render (${report.engine}; filter, measure, trim, dither, write, SHA-256): ` +
        `${renderS.toFixed(1)} s, ${(ours / 1e6).toFixed(2)} M samples/s, ${(audioS / renderS).toFixed(1)}× ` +
        `real time (child wall ${(wallMs / 1000).toFixed(1)} s incl. start-up)`,
    );
    console.log(
      `sox fir (1 pass, single-threaded):    ${soxS.toFixed(1)} s, ${(theirs / 1e6).toFixed(2)} M samples/s, ${(audioS / soxS).toFixed(1)}× real time`,
    );
    const ourCpuS = (report.cpuMs as number) / 1000;
    console.log(
      `CPU time: Rillbook ${ourCpuS.toFixed(2)} s, sox fir ${soxCpuS.toFixed(2)} s (ratio ${(soxCpuS / ourCpuS).toFixed(2)})`,
    );
    console.log(
      `sox biquad × ${sections.length} (the IIR sections, 1 pass): ${biquadS.toFixed(1)} ` +
        `s, ${(samples / biquadS / 1e6).toFixed(2)} M samples/s, ${(audioS / biquadS).toFixed(1)}× real time`,
    );
    console.log(
      `ratio Rillbook/sox throughput: ${(ours / theirs).toFixed(2)} against sox fir (the ` +
        `same filter); ${(ours / (samples / biquadS)).toFixed(2)} against sox biquad (the ` +
        `IIR sections: the curve's magnitude, not its phase)`,
    );
    console.log(
      `Rillbook render peak RSS: ${mb(report.maxRssKb)} (resourceUsage maxRSS), VmHWM ${mb(report.vmHwmKb)}`,
    );

    // The same file with a ceiling 6 dB under its filtered peak: the render needs a trim, so it
    // filters twice (measure, then write). sox has no such step; its time above is the yardstick.
    const ceilingDbfs = Math.min(0, Math.floor((report.peakDbfs as number) - 6));
    const trimmedRun = async (keepFiltered: string, label: string) => {
      const run = await runChild(pin, input, output, ceilingDbfs, "default", keepFiltered);
      await rm(output, { force: true });
      const wallS = (run.report.renderMs as number) / 1000;
      const cpuS = (run.report.cpuMs as number) / 1000;
      console.log(
        `with a trim, ${label} (ceiling ${ceilingDbfs} dBFS, trim ${(run.report.trimDb as number).toFixed(2)} dB, ` +
          `two passes; pass 2 filtered ${run.report.filteredAgain} frames again, took ${run.report.readBack} as kept, ` +
          `${run.report.fromFile} of them from the working file): ${wallS.toFixed(1)} s, ` +
          `${(samples / wallS / 1e6).toFixed(2)} M samples/s, ratio to sox ${(samples / wallS / theirs).toFixed(2)}, ` +
          `CPU ${cpuS.toFixed(2)} s (ratio ${(soxCpuS / cpuS).toFixed(2)}), peak RSS ${mb(run.report.maxRssKb)}`,
      );
      return { wallS, cpuS };
    };
    const trimmed = await trimmedRun("auto", "kept in the working file (the default)");
    await trimmedRun("memory", "kept in memory");
    await trimmedRun("never", "filtered again");

    // The same one-pass render with the JavaScript engine (the fallback where the native one is not built).
    const js = await runChild(pin, input, output, 0, "js");
    await rm(output, { force: true });
    const jsS = (js.report.renderMs as number) / 1000;
    const jsCpuS = (js.report.cpuMs as number) / 1000;
    console.log(
      `JavaScript engine (${js.report.engine}), one pass: ${jsS.toFixed(1)} s, CPU ${jsCpuS.toFixed(2)} s, ${(audioS / jsS).toFixed(1)}× real time`,
    );
    console.log(
      `native engine speed-up: ${(jsS / renderS).toFixed(1)}× (wall), ${(jsCpuS / ourCpuS).toFixed(1)}× (CPU time)`,
    );
    // The two figures on lines of their own, for scripts that read them.
    console.log(`ratio one pass: ${(ours / theirs).toFixed(2)} (CPU time ${(soxCpuS / ourCpuS).toFixed(2)})`);
    console.log(
      `ratio with trim: ${(samples / trimmed.wallS / theirs).toFixed(2)} (CPU time ${(soxCpuS / trimmed.cpuS).toFixed(2)})`,
    );
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}

/** Runs sox with `args`, pinned as the renders are; answers its CPU time (user + system, s) from bash's `times`. */
async function timedSox(pin: string[], args: string[]): Promise<number> {
  const argv = [...pin, "bash", "-c", 'sox --single-threaded "$@" && times', "bash", ...args];
  const { stdout } = await run(argv[0], argv.slice(1), { maxBuffer: 1 << 20 });
  // `times` prints the shell's own user and system time, then its children's: "0m1.990s 0m0.230s".
  const children = stdout.trim().split("\n").at(-1) ?? "";
  const seconds = [...children.matchAll(/(\d+)m([\d.]+)s/g)].map((m) => Number(m[1]) * 60 + Number(m[2]));
  if (seconds.length !== 2) throw new Error(`Could not read sox's CPU time from "${children}".`);
  return seconds[0] + seconds[1];
}

if (process.argv[2] === "--child") {
  const keep = process.argv[7] === "memory" || process.argv[7] === "never" ? process.argv[7] : "auto";
  child(
    process.argv[3],
    process.argv[4],
    Number(process.argv[5] ?? 0),
    process.argv[6] ?? "default",
    keep,
  ).catch((e) => {
    console.error(e);
    process.exit(1);
  });
} else {
  main().catch((e) => {
    console.error(e);
    process.exit(1);
  });
}
