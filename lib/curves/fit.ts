/**
 * Fit the curve model to a table of (Hz, dB) points — a published curve table
 * or a measured test-disc transfer — by nonlinear least squares
 * (ml-levenberg-marquardt), in log-τ space: τ spans decades and is positive, so
 * ln τ makes steps relative and keeps every time constant positive.
 *
 * Refusals, each naming the parameter: fewer points than parameters; no point
 * in the band a parameter acts on (a corner whose band holds no point leaves
 * the residual unchanged whatever its value); and a singular or ill-conditioned
 * Jacobian at the solution (two parameters that trade off against each other).
 */
import { levenbergMarquardt } from "ml-levenberg-marquardt";
import { buildAnalogModel, analogGainDb } from "./analog";
import { resolveCurve } from "./spec";
import { CurveError } from "./types";
import type { CornerName, CurvePoint, CurveSpec, ResolvedCurve } from "./types";
import { hzToUs, usToDb10k, usToHz } from "./units";

export type FitParameter = CornerName | "levelOffset";
export const FIT_PARAMETERS: readonly FitParameter[] = [
  "turnover",
  "shelf",
  "rolloff",
  "highpass",
  "ultrasonic",
  "levelOffset",
];

export interface FitRequest {
  points: CurvePoint[];
  /** "recording" tables are the negative of playback. */
  kind: "playback" | "recording";
  /** Parameters to fit; the others stay at their values in `initial`. */
  fit: FitParameter[];
  /** Starting values of fitted corners and fixed values of the rest (speed ratio and reference too). */
  initial?: CurveSpec;
  /** Start (if fitted) or fixed value of the level offset added to the model, dB. Default 0. */
  levelOffsetDb?: number;
}

export interface FittedCorner {
  parameter: CornerName;
  tauUs: number;
  hz: number;
  db10k?: number;
  fitted: boolean;
}

export interface FitResidual {
  hz: number;
  /** The point as given (recording tables keep their sign here). */
  db: number;
  /** Playback level the fitted model gives. */
  modelDb: number;
  /** Playback target − model (dB). */
  residualDb: number;
}

export interface FitResult {
  kind: "playback" | "recording";
  spec: CurveSpec;
  curve: ResolvedCurve;
  corners: FittedCorner[];
  levelOffsetDb: number;
  residuals: FitResidual[];
  rmsDb: number;
  worstDb: number;
  worstHz: number;
  /** Condition number of the column-scaled Jacobian at the solution. */
  conditionNumber: number;
  iterations: number;
}

/** Start values when a fitted corner is not given: the RIAA corners and the IEC high-pass (IEC 60098), a common ultrasonic zero. */
const DEFAULT_START_US: Record<CornerName, number> = {
  turnover: 318,
  shelf: 3180,
  rolloff: 75,
  highpass: 7950,
  ultrasonic: 3.18,
};

/**
 * Where each parameter acts, as a rule the user can act on. Bands follow the
 * asymptotes of the usual corners (common practice): a 2122 Hz rolloff is
 * < 0.5 dB below ~700 Hz, so a rolloff needs points above 2 kHz; shelves sit
 * at 25–150 Hz, high-passes at ≤ 50 Hz, turnovers at 200–1000 Hz.
 */
const BANDS: Record<CornerName, { test: (hz: number) => boolean; describe: string }> = {
  turnover: { test: (hz) => hz < 1000, describe: "below 1 kHz" },
  shelf: { test: (hz) => hz < 200, describe: "below 200 Hz" },
  rolloff: { test: (hz) => hz > 2000, describe: "above 2 kHz" },
  highpass: { test: (hz) => hz < 100, describe: "below 100 Hz" },
  ultrasonic: { test: (hz) => hz > 5000, describe: "above 5 kHz" },
};

const CONDITION_LIMIT = 1e6;

function cornerTauUs(spec: CurveSpec, name: CornerName): number | null {
  const c = spec[name];
  if (c == null) return null;
  if (c.unit === "hz") return hzToUs(c.value);
  if (c.unit === "us") return c.value;
  if (c.value === 0) return null;
  return (Math.sqrt(Math.pow(10, c.value / 10) - 1) / (2 * Math.PI * 10_000)) * 1e6;
}

/** Smallest and largest eigenvalues of a small symmetric matrix (cyclic Jacobi), with the eigenvector of the smallest. */
function symmetricEigen(a: number[][]): { min: number; max: number; minVector: number[] } {
  const n = a.length;
  const m = a.map((r) => r.slice());
  const v: number[][] = Array.from({ length: n }, (_, i) =>
    Array.from({ length: n }, (_, j) => (i === j ? 1 : 0)),
  );
  for (let sweep = 0; sweep < 60; sweep++) {
    let off = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) off += m[i][j] * m[i][j];
    if (off < 1e-30) break;
    for (let p = 0; p < n; p++) {
      for (let q = p + 1; q < n; q++) {
        if (Math.abs(m[p][q]) < 1e-300) continue;
        const theta = (m[q][q] - m[p][p]) / (2 * m[p][q]);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let k = 0; k < n; k++) {
          const mkp = m[k][p];
          const mkq = m[k][q];
          m[k][p] = c * mkp - s * mkq;
          m[k][q] = s * mkp + c * mkq;
        }
        for (let k = 0; k < n; k++) {
          const mpk = m[p][k];
          const mqk = m[q][k];
          m[p][k] = c * mpk - s * mqk;
          m[q][k] = s * mpk + c * mqk;
        }
        for (let k = 0; k < n; k++) {
          const vkp = v[k][p];
          const vkq = v[k][q];
          v[k][p] = c * vkp - s * vkq;
          v[k][q] = s * vkp + c * vkq;
        }
      }
    }
  }
  let iMin = 0;
  let iMax = 0;
  for (let i = 1; i < n; i++) {
    if (m[i][i] < m[iMin][iMin]) iMin = i;
    if (m[i][i] > m[iMax][iMax]) iMax = i;
  }
  return { min: m[iMin][iMin], max: m[iMax][iMax], minVector: v.map((row) => row[iMin]) };
}

export function fitCurve(request: FitRequest): FitResult {
  const { points, kind } = request;
  const initial: CurveSpec = request.initial ?? {};
  const fitList = Array.from(new Set(request.fit));
  if (fitList.length === 0) throw new CurveError("fit", "Choose at least one parameter to fit.");
  for (const p of fitList) {
    if (!FIT_PARAMETERS.includes(p)) {
      throw new CurveError("fit", `Unknown fit parameter "${p}"; choose from ${FIT_PARAMETERS.join(", ")}.`);
    }
  }
  if (!Array.isArray(points)) throw new CurveError("points", "Points must be a list of { hz, db }.");
  points.forEach((pt, i) => {
    if (!(Number.isFinite(pt.hz) && pt.hz > 0))
      throw new CurveError("points", `Point ${i + 1}: frequency must be a positive number.`);
    if (!Number.isFinite(pt.db))
      throw new CurveError("points", `Point ${i + 1}: level must be a finite number of dB.`);
  });
  if (points.length < fitList.length + 1) {
    throw new CurveError(
      "points",
      `${plural(points.length, "point")} cannot settle ${plural(fitList.length, "value")} ` +
        `with one left over as a check: give at least ${fitList.length + 1} points.`,
    );
  }
  const cornerNames = fitList.filter((p): p is CornerName => p !== "levelOffset");
  for (const name of cornerNames) {
    const band = BANDS[name];
    if (!points.some((pt) => band.test(pt.hz))) {
      throw new CurveError(
        name,
        `No point lies in the band where the ${name} acts (${band.describe}); it cannot be fitted from these points.`,
      );
    }
  }

  // Fixed corners and start values, all as τ in seconds.
  const baseTau: Partial<Record<CornerName, number>> = {};
  for (const name of ["turnover", "shelf", "rolloff", "highpass", "ultrasonic"] as CornerName[]) {
    const tauUs = cornerTauUs(initial, name) ?? (cornerNames.includes(name) ? DEFAULT_START_US[name] : null);
    if (tauUs !== null) baseTau[name] = tauUs * 1e-6;
  }
  const speedRatio = initial.speedRatio ?? 1;
  const reference = initial.reference ?? { hz: 1000, db: 0 };
  const fitLevel = fitList.includes("levelOffset");
  const level0 = request.levelOffsetDb ?? 0;

  const xs = points.map((p) => p.hz);
  const ys = points.map((p) => (kind === "recording" ? -p.db : p.db));

  const specFrom = (params: ArrayLike<number>): { spec: CurveSpec; levelDb: number } => {
    const spec: CurveSpec = { reference, speedRatio };
    for (const name of Object.keys(baseTau) as CornerName[]) {
      const idx = cornerNames.indexOf(name);
      const tauS = idx >= 0 ? Math.exp(params[idx]) : (baseTau[name] as number);
      spec[name] = { unit: "us", value: tauS * 1e6 };
    }
    return { spec, levelDb: fitLevel ? params[cornerNames.length] : level0 };
  };

  // The model skips validation while iterating (a step may pass the shelf
  // through the turnover); the final spec is validated below.
  const modelFor = (params: number[]) => {
    const { spec, levelDb } = specFrom(params);
    const tau = (n: CornerName) => (spec[n] ? (spec[n] as { value: number }).value / speedRatio : null);
    const zeroTausS = [tau("turnover"), tau("ultrasonic")]
      .filter((t): t is number => t !== null)
      .map((t) => t * 1e-6);
    const hp = tau("highpass");
    const integrator = spec.turnover != null && spec.shelf == null;
    const poleTausS = [tau("shelf"), tau("rolloff"), hp]
      .filter((t): t is number => t !== null)
      .map((t) => t * 1e-6);
    const w = (hz: number) => 2 * Math.PI * hz;
    const raw = (hz: number) => {
      let db = 0;
      for (const t of zeroTausS) db += 10 * Math.log10(1 + (w(hz) * t) ** 2);
      for (const t of poleTausS) db -= 10 * Math.log10(1 + (w(hz) * t) ** 2);
      // s·τh, unless a missing shelf's integrator cancels it (analog.ts).
      if (hp !== null && !integrator) db += 20 * Math.log10(w(hz) * hp * 1e-6);
      return db;
    };
    const refDb = raw(reference.hz);
    return (hz: number) => raw(hz) - refDb + reference.db + levelDb;
  };

  const start: number[] = cornerNames.map((n) => Math.log(baseTau[n] as number));
  if (fitLevel) start.push(level0);
  const starts: number[][] = [start];
  for (const factor of [0.5, 2, 0.25, 4]) {
    starts.push(start.map((v, i) => (i < cornerNames.length ? v + Math.log(factor) : v)));
  }

  let best: { params: number[]; sse: number; iterations: number } | null = null;
  for (const s of starts) {
    const r = levenbergMarquardt({ x: xs, y: ys }, modelFor, {
      initialValues: s,
      damping: 1e-2,
      maxIterations: 400,
      errorTolerance: 1e-14,
      improvementThreshold: 1e-6,
      gradientDifference: 1e-6,
      centralDifference: true,
      minValues: s.map((_, i) => (i < cornerNames.length ? Math.log(1e-7) : -120)),
      maxValues: s.map((_, i) => (i < cornerNames.length ? Math.log(1) : 120)),
    });
    const f = modelFor(r.parameterValues);
    let sse = 0;
    for (let i = 0; i < xs.length; i++) sse += (ys[i] - f(xs[i])) ** 2;
    if (Number.isFinite(sse) && (!best || sse < best.sse))
      best = { params: r.parameterValues, sse, iterations: r.iterations };
  }
  if (!best) throw new CurveError("fit", "The fit did not converge from any start.");

  // Conditioning at the solution: central-difference Jacobian, columns
  // scaled to unit norm so the test is about independence, not units.
  const p = best.params;
  const nPar = p.length;
  const cols: number[][] = [];
  for (let j = 0; j < nPar; j++) {
    const h = 1e-5;
    const up = p.slice();
    const dn = p.slice();
    up[j] += h;
    dn[j] -= h;
    const fu = modelFor(up);
    const fd = modelFor(dn);
    cols.push(xs.map((x) => (fu(x) - fd(x)) / (2 * h)));
  }
  const names: FitParameter[] = [...cornerNames, ...(fitLevel ? (["levelOffset"] as FitParameter[]) : [])];
  cols.forEach((c, j) => {
    const maxAbs = Math.max(...c.map(Math.abs));
    // Changing ln τ by 1 (τ × 2.7) moves no point by 0.05 dB: the points say nothing about it.
    if (maxAbs < 0.05) {
      throw new CurveError(
        names[j],
        `The points do not constrain the ${names[j]}: changing it barely moves the curve at any given frequency.`,
      );
    }
  });
  const norms = cols.map((c) => Math.sqrt(c.reduce((s, v) => s + v * v, 0)));
  const gram = cols.map((ci, i) =>
    cols.map((cj, j) => ci.reduce((s, v, k) => s + v * cj[k], 0) / (norms[i] * norms[j])),
  );
  const eig = symmetricEigen(gram);
  const conditionNumber = eig.min > 0 ? Math.sqrt(eig.max / eig.min) : Infinity;
  if (!(conditionNumber < CONDITION_LIMIT)) {
    const involved = names.filter((_, j) => Math.abs(eig.minVector[j]) > 0.3);
    throw new CurveError(
      involved[0] ?? names[0],
      `The points cannot tell ${involved.join(" and ")} apart (ill-conditioned fit, condition ` +
        `number ${conditionNumber.toExponential(1)}); fix one of them or add points where ` +
        `they differ.`,
    );
  }

  const { spec, levelDb } = specFrom(p);
  const curve = resolveCurve(spec); // refuses e.g. a shelf that ended above the turnover
  const f = modelFor(p);
  const residuals: FitResidual[] = points.map((pt, i) => {
    const modelDb = f(pt.hz);
    return { hz: pt.hz, db: pt.db, modelDb, residualDb: ys[i] - modelDb };
  });
  let worst = residuals[0];
  for (const r of residuals) if (Math.abs(r.residualDb) > Math.abs(worst.residualDb)) worst = r;
  const rmsDb = Math.sqrt(residuals.reduce((s, r) => s + r.residualDb ** 2, 0) / residuals.length);
  // Cross-check the closed-form model against the library's analog curve once.
  const check = analogGainDb(buildAnalogModel(curve), points[0].hz) + levelDb;
  if (Math.abs(check - residuals[0].modelDb) > 1e-6) {
    throw new CurveError("fit", "Internal mismatch between the fit model and the analog curve.");
  }
  const corners: FittedCorner[] = (Object.keys(baseTau) as CornerName[]).map((name) => {
    const tauUs = (spec[name] as { value: number }).value;
    const c: FittedCorner = { parameter: name, tauUs, hz: usToHz(tauUs), fitted: cornerNames.includes(name) };
    if (name === "rolloff") c.db10k = usToDb10k(tauUs);
    return c;
  });
  return {
    kind,
    spec,
    curve,
    corners,
    levelOffsetDb: levelDb,
    residuals,
    rmsDb,
    worstDb: Math.abs(worst.residualDb),
    worstHz: worst.hz,
    conditionNumber,
    iterations: best.iterations,
  };
}

function plural(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? "" : "s"}`;
}
