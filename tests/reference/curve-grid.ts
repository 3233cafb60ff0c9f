/**
 * The grid of curves both realisations are checked on: turnover 250–800 Hz,
 * rolloff 0–16 dB at 10 kHz, four bass shapes (two shelves, shelf plus rumble
 * high-pass, no shelf with high-pass), plus the published curves and
 * ultrasonic-zero cases. 205 curves.
 */
import type { CurveSpec } from "../../lib/curves";
import { BS1928_COARSE_SPEC, IEC_HIGHPASS_SPEC, RIAA_SPEC } from "../../lib/curves";

export const COMMON_RATES_HZ = [44_100, 48_000, 88_200, 96_000, 176_400, 192_000];

export interface GridCurve {
  label: string;
  spec: CurveSpec;
  /** Time constants in µs for the python side, which builds its own model. */
  taus: Record<string, number>;
}

function tausOf(spec: CurveSpec): Record<string, number> {
  const out: Record<string, number> = {};
  for (const name of ["turnover", "shelf", "rolloff", "highpass", "ultrasonic"] as const) {
    const c = spec[name];
    if (!c) continue;
    if (c.unit === "us") out[name] = c.value;
    else if (c.unit === "hz") out[name] = 1e6 / (2 * Math.PI * c.value);
    else if (c.value > 0) out[name] = (Math.sqrt(10 ** (c.value / 10) - 1) / (2 * Math.PI * 10_000)) * 1e6;
  }
  return out;
}

export function curveGrid(): GridCurve[] {
  const curves: GridCurve[] = [];
  const turnovers = [250, 300, 350, 400, 500, 600, 700, 800];
  const rolloffs = [0, 3, 6, 10, 13.7, 16];
  const bass = ["shelf10", "shelf4", "shelf+hp", "hp"] as const;
  for (const t of turnovers) {
    for (const r of rolloffs) {
      for (const b of bass) {
        const spec: CurveSpec = { turnover: { unit: "hz", value: t }, rolloff: { unit: "db10k", value: r } };
        if (b === "shelf10") spec.shelf = { unit: "hz", value: t / 10 };
        if (b === "shelf4") spec.shelf = { unit: "hz", value: t / 4 };
        if (b === "shelf+hp") {
          spec.shelf = { unit: "hz", value: t / 10 };
          spec.highpass = { unit: "us", value: 7950 };
        }
        if (b === "hp") spec.highpass = { unit: "us", value: 7950 };
        curves.push({ label: `t${t} r${r} ${b}`, spec, taus: tausOf(spec) });
      }
    }
  }
  const named: [string, CurveSpec][] = [
    ["RIAA", RIAA_SPEC],
    ["IEC 7950", IEC_HIGHPASS_SPEC],
    ["BS 1928", BS1928_COARSE_SPEC],
    ["RIAA + ultrasonic", { ...RIAA_SPEC, ultrasonic: { unit: "us", value: 3.18 } }],
    ["IEC + ultrasonic", { ...IEC_HIGHPASS_SPEC, ultrasonic: { unit: "us", value: 3.18 } }],
    ["flat bass, 10 dB", { rolloff: { unit: "db10k", value: 10 } }],
    ["flat", {}],
  ];
  for (const [label, spec] of named) curves.push({ label, spec, taus: tausOf(spec) });
  // Ultrasonic zero with and without rolloff, over the turnover range.
  for (const t of [250, 400, 500, 650, 800]) {
    for (const r of [0, 13.7]) {
      const spec: CurveSpec = {
        turnover: { unit: "hz", value: t },
        shelf: { unit: "hz", value: t / 10 },
        rolloff: { unit: "db10k", value: r },
        ultrasonic: { unit: "us", value: 3.18 },
      };
      curves.push({ label: `t${t} r${r} ultrasonic`, spec, taus: tausOf(spec) });
    }
  }
  return curves;
}
