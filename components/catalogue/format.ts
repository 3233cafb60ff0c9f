import type { SideStatusName } from "@/lib/validation/catalogue";
import { formatLabels, statusLabels } from "@/lib/validation/catalogue";

/** 33⅓ is stored as 33.33; everything else prints as the number it is. */
export function speedLabel(rpm: number | string | null | undefined): string {
  if (rpm === null || rpm === undefined || rpm === "") return "—";
  const n = Number(rpm);
  if (Math.abs(n - 33.33) < 0.01) return "33⅓";
  if (Math.abs(n - 16.67) < 0.01) return "16⅔";
  return String(Math.round(n * 100) / 100);
}

export function formatLabel(format: string): string {
  return formatLabels[format as keyof typeof formatLabels] ?? format;
}

export function statusLabel(status: string): string {
  return statusLabels[status as SideStatusName] ?? status;
}

export const conditionLabels: Record<string, string> = {
  unassessed: "Not assessed",
  excellent: "Excellent",
  good: "Good",
  fair: "Fair",
  poor: "Poor",
  unplayable: "Unplayable",
};

export const flagLabels: Record<string, string> = {
  cracks: "Cracks",
  warp: "Warp",
  delamination: "Delamination",
  residue: "Residue",
  mould: "Mould",
  wear: "Groove wear",
  chips: "Chips",
  scratches: "Scratches",
};

export const baseLabels: Record<string, string> = {
  aluminium: "Aluminium",
  glass: "Glass",
  card: "Card",
  unknown: "Unknown",
};

const pad = (n: number) => String(n).padStart(2, "0");

/** A calendar date as ISO 8601 (YYYY-MM-DD), the same whatever the browser's language. */
export function isoDate(at: string | Date): string {
  const d = new Date(at);
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}`;
}

/**
 * A moment as an ISO 8601 date and a 24-hour local time ("2026-12-03 14:05"), the same
 * whatever the browser's language, so no one reads 03/12 as March or December.
 */
export function when(at: string | Date, { seconds = false }: { seconds?: boolean } = {}): string {
  const d = new Date(at);
  const time = `${pad(d.getHours())}:${pad(d.getMinutes())}${seconds ? `:${pad(d.getSeconds())}` : ""}`;
  return `${isoDate(d)} ${time}`;
}

/** The props of a text field that takes a date as YYYY-MM-DD (a browser date picker shows the browser's locale). */
export const isoDateInputProps = {
  type: "text",
  inputMode: "numeric",
  placeholder: "YYYY-MM-DD",
  pattern: "\\d{4}-\\d{2}-\\d{2}",
  maxLength: 10,
  autoComplete: "off",
  spellCheck: false,
} as const;
