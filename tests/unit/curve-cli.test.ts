import { execFile } from "node:child_process";
import { fileURLToPath } from "node:url";
import { promisify } from "node:util";
import { describe, expect, it } from "vitest";

const run = promisify(execFile);
const root = fileURLToPath(new URL("../../", import.meta.url));
const tsx = `${root}node_modules/.bin/tsx`;

async function cli(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  try {
    const { stdout, stderr } = await run(tsx, ["scripts/curve.ts", ...args], { cwd: root, timeout: 60_000 });
    return { code: 0, stdout, stderr };
  } catch (error) {
    const e = error as { code: number; stdout: string; stderr: string };
    return { code: e.code, stdout: e.stdout, stderr: e.stderr };
  }
}

// Each case starts the command through tsx (a second or more apiece, longer on a busy machine).
describe("curve CLI", { timeout: 60_000 }, () => {
  it("design --json prints the sections, poles, zeros, gain and errors", async () => {
    const r = await cli([
      "design",
      "--turnover-hz",
      "500",
      "--shelf-hz",
      "50",
      "--rolloff-db",
      "13.7",
      "--rate",
      "44100",
      "--json",
    ]);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.sos).toHaveLength(2);
    for (const row of out.sos) {
      expect(row).toHaveLength(6);
      expect(row[3]).toBe(1);
    }
    // f = 1/(2πτ): zero at −2π·500 rad/s, poles at −2π·50 and at −1/75.4 µs (13.7 dB at 10 kHz; common practice).
    expect(out.zeros[0]).toBeCloseTo(-2 * Math.PI * 500, 6);
    expect(Math.max(...out.poles)).toBeCloseTo(-2 * Math.PI * 50, 6);
    expect(Math.min(...out.poles)).toBeCloseTo(-1e6 / 75.397, 0);
    expect(out.k).toBeGreaterThan(0);
    expect(out.peakGainDb).toBeGreaterThan(19);
    expect(out.maxErrorDb).toBeLessThan(0.005);
    expect(typeof out.maxPhaseErrorDeg).toBe("number");
  });

  it("reads --rolloff-db as attenuation whichever sign it has, and prints it one way", async () => {
    const runs = await Promise.all(
      [["10"], ["-10"], ["\u221210"], ["+10"]].map(([db]) =>
        cli([
          "design",
          "--turnover-hz",
          "500",
          "--shelf-hz",
          "50",
          "--rolloff-db",
          db,
          "--rate",
          "48000",
          "--json",
        ]),
      ),
    );
    const poles = runs.map((r) => {
      expect(r.code).toBe(0);
      return JSON.parse(r.stdout).poles;
    });
    for (const p of poles) expect(p).toEqual(poles[0]);
    // τr = sqrt(10^(10/10) − 1)/(2π·10 000) = 47.746 µs (DESIGN.md, "The curve model"): a pole at −1/τr.
    expect(Math.min(...poles[0])).toBeCloseTo(-1e6 / 47.746, 0);
    const text = await cli(["design", "--turnover-hz", "500", "--shelf-hz", "50", "--rolloff-db", "-10"]);
    expect(text.stdout).toContain("10 dB attenuation at 10 kHz");
  }, 60_000);

  it("design --render-filter adds the FIR with its delay", async () => {
    const r = await cli([
      "design",
      "--turnover-us",
      "318",
      "--shelf-us",
      "3180",
      "--rolloff-us",
      "75",
      "--rate",
      "48000",
      "--render-filter",
      "--json",
    ]);
    expect(r.code).toBe(0);
    const rf = JSON.parse(r.stdout).renderFilter;
    expect(rf.kind).toBe("fir");
    expect(Number.isInteger(rf.delaySamples)).toBe(true);
    expect(rf.taps.length).toBeGreaterThan(rf.delaySamples);
    expect(rf.maxErrorDb).toBeLessThan(0.005);
    expect(rf.maxPhaseErrorDeg).toBeLessThan(0.5);
  });

  it("rejects an unknown flag with exit code 2", async () => {
    const r = await cli(["design", "--turnover-khz", "5"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/turnover-khz/);
  });

  it("rejects a non-numeric value and an unbounded curve with exit code 2", async () => {
    const a = await cli(["design", "--turnover-hz", "five"]);
    expect(a.code).toBe(2);
    expect(a.stderr).toMatch(/--turnover-hz expects a number/);
    const b = await cli(["design", "--turnover-hz", "500"]);
    expect(b.code).toBe(2);
    expect(b.stderr).toMatch(/shelf/);
  });
});
