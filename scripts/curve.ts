/**
 * Command-line access to the curve maths (lib/curves).
 *
 *   npx tsx scripts/curve.ts design   [curve flags] [--rate 48000] [--render-filter] [--json]
 *   npx tsx scripts/curve.ts response [curve flags] [--freqs 20,1000,20000] [--json]
 *   npx tsx scripts/curve.ts fit POINTS.csv --fit turnover,rolloff [--recording] [curve flags] [--json]
 *
 * Curve flags: --turnover-hz|--turnover-us, --shelf-hz|--shelf-us,
 * --rolloff-db|--rolloff-us|--rolloff-hz, --highpass-hz|--highpass-us,
 * (--rolloff-db is the attenuation at 10 kHz: 10, -10 and −10 all mean 10 dB of cut),
 * --ultrasonic-hz|--ultrasonic-us, --ref-hz, --ref-db, --speed-ratio,
 * --preset NAME (reads the lab's current preset version from PostgreSQL via
 * DATABASE_URL; other flags override its values).
 *
 * Exit codes: 0 done, 2 bad flags or an invalid curve, 1 anything else.
 */
import "./lib/demo-env";
import { env } from "../lib/env";
import { readFile } from "node:fs/promises";
import { parseArgs } from "node:util";
import {
  analogResponse,
  asymptotes,
  buildAnalogModel,
  CurveError,
  designIirFromModel,
  designRenderFilterFromModel,
  FIT_PARAMETERS,
  fitCurve,
  parsePointsCsv,
  peakGain,
  formatRolloffDb,
  parseRolloffDb,
  PointsParseError,
  resolveCurve,
} from "../lib/curves";
import type { CornerInput, CurveSpec, FitParameter } from "../lib/curves";
import { storedCurveSpecSchema } from "../lib/validation/records";

class UsageError extends Error {}

const USAGE = `usage:
  curve design   [curve flags] [--rate HZ] [--render-filter] [--json]
  curve response [curve flags] [--freqs 20,1000,20000] [--json]
  curve fit POINTS.csv --fit turnover,rolloff[,shelf,highpass,ultrasonic,levelOffset] [--recording] [curve flags] [--json]
curve flags: --turnover-hz|--turnover-us  --shelf-hz|--shelf-us  --rolloff-db (attenuation at 10 kHz; 10 or -10)|--rolloff-us|--rolloff-hz
             --highpass-hz|--highpass-us  --ultrasonic-hz|--ultrasonic-us  --ref-hz  --ref-db  --speed-ratio  --preset NAME`;

const CORNER_FLAGS: Record<string, [keyof CurveSpec, CornerInput["unit"]]> = {
  "turnover-hz": ["turnover", "hz"],
  "turnover-us": ["turnover", "us"],
  "shelf-hz": ["shelf", "hz"],
  "shelf-us": ["shelf", "us"],
  "rolloff-db": ["rolloff", "db10k"],
  "rolloff-us": ["rolloff", "us"],
  "rolloff-hz": ["rolloff", "hz"],
  "highpass-hz": ["highpass", "hz"],
  "highpass-us": ["highpass", "us"],
  "ultrasonic-hz": ["ultrasonic", "hz"],
  "ultrasonic-us": ["ultrasonic", "us"],
};

const OPTIONS = {
  ...Object.fromEntries(Object.keys(CORNER_FLAGS).map((k) => [k, { type: "string" as const }])),
  "ref-hz": { type: "string" as const },
  "ref-db": { type: "string" as const },
  "speed-ratio": { type: "string" as const },
  preset: { type: "string" as const },
  rate: { type: "string" as const },
  "render-filter": { type: "boolean" as const },
  freqs: { type: "string" as const },
  fit: { type: "string" as const },
  recording: { type: "boolean" as const },
  json: { type: "boolean" as const },
  help: { type: "boolean" as const, short: "h" },
};

type Values = Record<string, string | boolean | undefined>;

function numberFlag(values: Values, name: string): number | undefined {
  const raw = values[name];
  if (raw === undefined) return undefined;
  // The rolloff in dB is read as attenuation whichever sign it is given with (lib/curves parseRolloffDb).
  const n = name === "rolloff-db" && typeof raw === "string" ? parseRolloffDb(raw) : Number(raw);
  if (typeof raw !== "string" || raw.trim() === "" || !Number.isFinite(n)) {
    throw new UsageError(`--${name} expects a number, got "${String(raw)}".`);
  }
  return n;
}

async function loadPreset(name: string): Promise<CurveSpec> {
  // The demo lab's database unless DATABASE_URL names another (lib/env).
  const url = env().DATABASE_URL;
  const { default: pg } = await import("pg");
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    const result = await client.query<{ spec: unknown }>(
      "SELECT v.spec FROM curve_presets p JOIN curve_preset_versions v ON v.preset_id = p.id AND v.version = p.current_version WHERE lower(p.name) = lower($1)",
      [name],
    );
    if (result.rows.length === 0)
      throw new UsageError(`No preset named "${name}" in the library at ${new URL(url).host}.`);
    const stored = result.rows[0].spec;
    // The stored JSON is parsed with its schema, never trusted as it comes.
    return storedCurveSpecSchema.parse(typeof stored === "string" ? JSON.parse(stored) : stored);
  } finally {
    await client.end();
  }
}

async function specFromFlags(values: Values): Promise<CurveSpec> {
  const spec: CurveSpec = values.preset ? { ...(await loadPreset(String(values.preset))) } : {};
  const seen = new Map<string, string>();
  for (const [flag, [corner, unit]] of Object.entries(CORNER_FLAGS)) {
    const value = numberFlag(values, flag);
    if (value === undefined) continue;
    if (seen.has(corner))
      throw new UsageError(`--${flag} and --${seen.get(corner)} both give the ${corner}; give one.`);
    seen.set(corner, flag);
    (spec as Record<string, unknown>)[corner] = { unit, value };
  }
  const refHz = numberFlag(values, "ref-hz");
  const refDb = numberFlag(values, "ref-db");
  if (refHz !== undefined || refDb !== undefined) {
    const base = spec.reference ?? { hz: 1000, db: 0 };
    spec.reference = { hz: refHz ?? base.hz, db: refDb ?? base.db };
  }
  const ratio = numberFlag(values, "speed-ratio");
  if (ratio !== undefined) spec.speedRatio = ratio;
  return spec;
}

function fmt(x: number, digits = 4): string {
  return Number.isFinite(x) ? x.toFixed(digits) : String(x);
}

async function design(values: Values): Promise<void> {
  const spec = await specFromFlags(values);
  const rate = numberFlag(values, "rate") ?? 48_000;
  const model = buildAnalogModel(resolveCurve(spec));
  const iir = designIirFromModel(model, rate);
  const peak = peakGain(model);
  const out: Record<string, unknown> = {
    spec,
    corners: ["turnover", "shelf", "rolloff", "highpass", "ultrasonic"]
      .map((n) => model.curve[n as "turnover"])
      .filter(Boolean),
    sampleRateHz: rate,
    sos: iir.sos,
    zeros: model.zerosRadS,
    poles: model.polesRadS,
    k: model.k,
    gainK: model.gainK,
    peakGainDb: peak.peakGainDb,
    peakHz: peak.peakHz,
    asymptotes: asymptotes(model),
    maxErrorDb: iir.maxErrorDb,
    maxPhaseErrorDeg: iir.maxPhaseErrorDeg,
    wideBand: iir.wideBand,
  };
  if (values["render-filter"]) {
    const rf = designRenderFilterFromModel(model, rate);
    out.renderFilter = {
      kind: rf.kind,
      taps: Array.from(rf.taps),
      delaySamples: rf.delaySamples,
      maxErrorDb: rf.maxErrorDb,
      maxPhaseErrorDeg: rf.maxPhaseErrorDeg,
      wideBand: rf.wideBand,
    };
  }
  if (values.json) {
    process.stdout.write(JSON.stringify(out) + "\n");
    return;
  }
  const lines: string[] = [];
  for (const c of model.curve
    ? [
        model.curve.turnover,
        model.curve.shelf,
        model.curve.rolloff,
        model.curve.highpass,
        model.curve.ultrasonic,
      ]
    : []) {
    if (!c) continue;
    const extra = c.db10k !== undefined ? `, ${formatRolloffDb(c.db10k)}` : "";
    lines.push(
      `${c.parameter.padEnd(10)} ${fmt(c.tauUs, 2)} µs = ${fmt(c.hz, 2)} Hz${extra} (entered ` +
        `${c.entered.value} ${c.entered.unit}; filter uses ${fmt(c.filterTauUs, 3)} µs)`,
    );
  }
  if (lines.length === 0) lines.push("flat curve (no corners)");
  lines.push(
    `reference  ${model.curve.reference.db} dB at ${model.curve.reference.hz} Hz; speed ratio ${model.curve.speedRatio}`,
  );
  lines.push(`peak gain  ${fmt(peak.peakGainDb, 2)} dB at ${fmt(peak.peakHz, 1)} Hz`);
  lines.push(`zeros      ${model.zerosRadS.map((z) => fmt(z, 3)).join(", ") || "none"} rad/s`);
  lines.push(`poles      ${model.polesRadS.map((p) => fmt(p, 3)).join(", ") || "none"} rad/s`);
  lines.push(`k          ${model.k}`);
  lines.push(`IIR at ${rate} Hz, ${iir.sos.length} sections:`);
  for (const row of iir.sos) lines.push("  " + row.map((v) => v.toPrecision(12)).join("  "));
  lines.push(
    `  worst deviation 20 Hz–20 kHz: ${fmt(iir.maxErrorDb, 5)} dB, ${fmt(iir.maxPhaseErrorDeg, 2)}° (phase of a minimum-phase IIR departs near Nyquist)`,
  );
  if (out.renderFilter) {
    const rf = out.renderFilter as {
      taps: number[];
      delaySamples: number;
      maxErrorDb: number;
      maxPhaseErrorDeg: number;
    };
    lines.push(
      `render filter: FIR, ${rf.taps.length} taps, delay ${rf.delaySamples} samples, ` +
        `worst ${rf.maxErrorDb.toExponential(2)} dB, ${rf.maxPhaseErrorDeg.toExponential(2)}°`,
    );
  }
  process.stdout.write(lines.join("\n") + "\n");
}

async function response(values: Values): Promise<void> {
  const spec = await specFromFlags(values);
  const freqText =
    typeof values.freqs === "string" ? values.freqs : "20,50,100,200,500,1000,2000,5000,10000,20000";
  const freqs = freqText.split(",").map((f) => {
    const n = Number(f.trim());
    if (!(n > 0) || !Number.isFinite(n)) throw new UsageError(`--freqs: "${f}" is not a positive frequency.`);
    return n;
  });
  const model = buildAnalogModel(resolveCurve(spec));
  const r = analogResponse(model, freqs);
  if (values.json) {
    const rows = r.hz.map((hz, i) => ({ hz, gainDb: r.gainDb[i], phaseDeg: r.phaseDeg[i] }));
    process.stdout.write(JSON.stringify({ spec, response: rows }) + "\n");
    return;
  }
  const lines = ["      Hz      dB     phase°"];
  r.hz.forEach((hz, i) =>
    lines.push(
      `${fmt(hz, 1).padStart(8)} ${fmt(r.gainDb[i], 3).padStart(8)} ${fmt(r.phaseDeg[i], 2).padStart(9)}`,
    ),
  );
  process.stdout.write(lines.join("\n") + "\n");
}

async function fit(values: Values, positionals: string[]): Promise<void> {
  const file = positionals[1];
  if (!file) throw new UsageError("fit needs a points file: curve fit POINTS.csv --fit turnover,rolloff");
  if (typeof values.fit !== "string" || values.fit.trim() === "")
    throw new UsageError("fit needs --fit with the parameters to fit, e.g. --fit turnover,rolloff");
  const params = values.fit.split(",").map((p) => p.trim());
  for (const p of params) {
    if (!FIT_PARAMETERS.includes(p as FitParameter))
      throw new UsageError(`--fit: unknown parameter "${p}"; choose from ${FIT_PARAMETERS.join(", ")}.`);
  }
  let text: string;
  try {
    text = await readFile(file, "utf8");
  } catch {
    throw new UsageError(`Cannot read points file "${file}".`);
  }
  const points = parsePointsCsv(text);
  const initial = await specFromFlags(values);
  const result = fitCurve({
    points,
    kind: values.recording ? "recording" : "playback",
    fit: params as FitParameter[],
    initial,
  });
  if (values.json) {
    const { curve: _curve, ...rest } = result;
    void _curve;
    process.stdout.write(JSON.stringify(rest) + "\n");
    return;
  }
  const lines: string[] = [];
  for (const c of result.corners) {
    const extra = c.db10k !== undefined ? `, ${formatRolloffDb(c.db10k)}` : "";
    lines.push(
      `${c.parameter.padEnd(10)} ${fmt(c.tauUs, 2)} µs = ${fmt(c.hz, 2)} Hz${extra}${c.fitted ? "  (fitted)" : ""}`,
    );
  }
  lines.push(
    `level offset ${fmt(result.levelOffsetDb, 3)} dB${params.includes("levelOffset") ? "  (fitted)" : ""}`,
  );
  lines.push(
    `RMS residual ${fmt(result.rmsDb, 4)} dB, worst ${fmt(result.worstDb, 4)} dB at ${result.worstHz} Hz (${result.kind} table, ${points.length} points)`,
  );
  // Show the model in the table's own convention (recording = −playback).
  const sign = result.kind === "recording" ? -1 : 1;
  lines.push(`      Hz    given    model  residual   (${result.kind} levels)`);
  for (const r of result.residuals) {
    const model = sign * r.modelDb;
    lines.push(
      `${fmt(r.hz, 1).padStart(8)} ${fmt(r.db, 3).padStart(8)} ${fmt(model, 3).padStart(8)} ${fmt(r.db - model, 4).padStart(9)}`,
    );
  }
  process.stdout.write(lines.join("\n") + "\n");
}

/** "--rolloff-db -10" → "--rolloff-db=-10": parseArgs takes a value that starts with a dash only in the joined form. */
function joinNegativeValues(argv: string[]): string[] {
  const out: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const flag = argv[i].startsWith("--") ? argv[i].slice(2) : null;
    const next = argv[i + 1];
    if (
      flag &&
      !flag.includes("=") &&
      OPTIONS[flag as keyof typeof OPTIONS]?.type === "string" &&
      next !== undefined &&
      /^-(\d|\.\d)/.test(next)
    ) {
      out.push(`${argv[i]}=${next}`);
      i++;
    } else out.push(argv[i]);
  }
  return out;
}

async function main(argv: string[]): Promise<number> {
  let parsed: ReturnType<
    typeof parseArgs<{ options: typeof OPTIONS; allowPositionals: true; args: string[] }>
  >;
  try {
    parsed = parseArgs({
      args: joinNegativeValues(argv),
      options: OPTIONS,
      allowPositionals: true,
      strict: true,
    });
  } catch (error) {
    process.stderr.write(`${(error as Error).message}\n${USAGE}\n`);
    return 2;
  }
  const { values, positionals } = parsed;
  if (values.help) {
    process.stdout.write(USAGE + "\n");
    return 0;
  }
  const command = positionals[0];
  try {
    if (command === "design") await design(values);
    else if (command === "response") await response(values);
    else if (command === "fit") await fit(values, positionals);
    else throw new UsageError(command ? `Unknown command "${command}".` : "Give a command.");
    return 0;
  } catch (error) {
    if (error instanceof UsageError) {
      process.stderr.write(`${error.message}\n${USAGE}\n`);
      return 2;
    }
    if (error instanceof CurveError) {
      process.stderr.write(`Invalid ${error.parameter}: ${error.message}\n`);
      return 2;
    }
    if (error instanceof PointsParseError) {
      process.stderr.write(`${error.message}\n`);
      return 2;
    }
    process.stderr.write(`${(error as Error).stack ?? String(error)}\n`);
    return 1;
  }
}

void main(process.argv.slice(2)).then((code) => {
  process.exitCode = code;
});
