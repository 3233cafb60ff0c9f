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

const dateTime = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short" });
export function when(at: string | Date): string {
  return dateTime.format(new Date(at));
}
