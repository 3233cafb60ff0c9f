/** Number formats shared by the curve plots and fields (one decimal style across the workbench). */
// The number style and corner words are lib/curves' own, so names and plots agree.
export { CORNER_WORDS, formatNumber } from "@/lib/curves";
import { formatNumber } from "@/lib/curves";

/** 500 → "500 Hz", 2122 → "2.12 kHz". */
export function formatHz(hz: number): string {
  if (!Number.isFinite(hz)) return "—";
  if (hz >= 1000) return `${formatNumber(hz / 1000, 3)} kHz`;
  return `${formatNumber(hz, 4)} Hz`;
}

/** Axis label: 20 → "20", 2000 → "2k". */
export function formatHzTick(hz: number): string {
  return hz >= 1000 ? `${hz / 1000}k` : String(hz);
}

/** Signed dB with a real minus sign: "+19.7 dB", "−0.09 dB". */
export function formatDb(db: number, digits = 1): string {
  if (!Number.isFinite(db)) return "—";
  const s = Math.abs(db).toFixed(digits);
  if (Number(s) === 0) return `${(0).toFixed(digits)} dB`;
  return `${db < 0 ? "−" : "+"}${s} dB`;
}

export function formatSigned(value: number, digits = 1): string {
  const s = Math.abs(value).toFixed(digits);
  if (Number(s) === 0) return (0).toFixed(digits);
  return `${value < 0 ? "−" : "+"}${s}`;
}

/** The plot colours, in the order the compare slots take them: groove teal first (the curve being edited). */
export const CURVE_COLORS = ["#2f6f6a", "#a9591a", "#5a4f9e", "#b03a6f"] as const;
