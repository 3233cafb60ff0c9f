/**
 * Runs the reference scripts in tests/reference/py with a python3 that has
 * scipy, exchanging JSON (and raw little-endian float64 files for long FIRs)
 * through a temporary folder. The reference suite depends on scipy on
 * purpose: it is the independent implementation the curve maths is checked
 * against, so a missing scipy is a failure, not a skip.
 */
import { execFile } from "node:child_process";
import { mkdtemp, readFile, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { promisify } from "node:util";

const run = promisify(execFile);
const PY_DIR = fileURLToPath(new URL("../reference/py/", import.meta.url));
const CANDIDATES = ["python3", "/usr/bin/python3"];

let found: Promise<string> | null = null;

async function probe(): Promise<string> {
  for (const candidate of CANDIDATES) {
    try {
      await run(candidate, ["-c", "import scipy.signal, numpy"], { timeout: 60_000 });
      return candidate;
    } catch {
      // try the next one
    }
  }
  throw new Error(
    "No python3 with scipy was found (tried: " +
      CANDIDATES.join(", ") +
      "). The reference tests check lib/curves against scipy.signal; install Debian's python3-scipy (apt-get install -y python3-scipy).",
  );
}

/** The python3 to use; rejects with install instructions when none has scipy. */
export function findPython(): Promise<string> {
  if (!found) found = probe();
  return found;
}

/**
 * Run tests/reference/py/<script> with argv [input.json, output.json, tmpdir];
 * `binaries` are written as <tmpdir>/<name>.f64 (float64 little-endian).
 */
export async function runPython<T>(
  script: string,
  input: unknown,
  binaries: Record<string, Float64Array> = {},
): Promise<T> {
  const python = await findPython();
  const dir = await mkdtemp(join(tmpdir(), "rillbook-ref-"));
  try {
    const inPath = join(dir, "input.json");
    const outPath = join(dir, "output.json");
    await writeFile(inPath, JSON.stringify(input));
    for (const [name, data] of Object.entries(binaries)) {
      await writeFile(
        join(dir, `${name}.f64`),
        new Uint8Array(data.buffer, data.byteOffset, data.byteLength),
      );
    }
    try {
      await run(python, [join(PY_DIR, script), inPath, outPath, dir], {
        timeout: 600_000,
        maxBuffer: 64 * 1024 * 1024,
      });
    } catch (error) {
      const e = error as { stderr?: string; message: string };
      throw new Error(`${script} failed: ${e.stderr || e.message}`);
    }
    return JSON.parse(await readFile(outPath, "utf8")) as T;
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
