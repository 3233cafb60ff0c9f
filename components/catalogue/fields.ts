import { valueText } from "@/lib/value-text";
import { baseLabels, conditionLabels, flagLabels, formatLabel, speedLabel } from "./format";

/** What each disc field is called on screen, in edit histories and conflict lists. */
export const discFieldLabels: Record<string, string> = {
  accessionId: "Accession",
  shelfMark: "Shelf mark",
  labelName: "Label",
  catalogueNumber: "Catalogue number",
  format: "Format",
  base: "Base",
  diameterIn: "Diameter",
  nominalSpeedRpm: "Nominal speed",
  groove: "Groove",
  cut: "Cut",
  recordingDate: "Recording date",
  recordedFromYear: "Recorded from (year)",
  recordedToYear: "Recorded to (year)",
  conditionGrade: "Condition",
  conditionFlags: "Condition flags",
  conditionNotes: "Condition notes",
  handlingNotes: "Handling notes",
  sides: "Sides",
};

export const sideFieldLabels: Record<string, string> = {
  designation: "side",
  matrixNumber: "matrix",
  take: "take",
  title: "title",
  performers: "performers",
  notes: "notes",
};

/** A field's value as words a person reads ("—" for nothing given). */
export function fieldText(
  field: string,
  value: unknown,
  accessionName?: (id: string) => string | undefined,
): string {
  if (value === null || value === undefined || value === "") return "—";
  switch (field) {
    case "format":
      return formatLabel(valueText(value));
    case "base":
      return baseLabels[valueText(value)] ?? valueText(value);
    case "nominalSpeedRpm":
      return `${speedLabel(value as number)} rpm`;
    case "diameterIn":
      return `${valueText(value)} in`;
    case "conditionGrade":
      return conditionLabels[valueText(value)] ?? valueText(value);
    case "conditionFlags":
      return Array.isArray(value) && value.length
        ? value.map((f: string) => flagLabels[f] ?? f).join(", ")
        : "none";
    case "accessionId":
      return accessionName?.(valueText(value)) ?? valueText(value);
    case "groove":
      return value === "micro" ? "Microgroove" : "Coarse groove";
    case "cut":
      return value === "vertical" ? "Vertical (hill-and-dale)" : "Lateral";
    default:
      return valueText(value);
  }
}

interface SideLike {
  id?: string;
  designation: string;
  matrixNumber?: string;
  take?: string;
  title?: string;
  performers?: string;
  notes?: string;
}

/** Differences between two lists of sides, as short sentences. */
export function sideChanges(before: SideLike[], after: SideLike[]): string[] {
  const out: string[] = [];
  const key = (s: SideLike) => s.id ?? `new:${s.designation.toLowerCase()}`;
  const old = new Map(before.map((s) => [key(s), s]));
  const seen = new Set<string>();
  for (const s of after) {
    const k = key(s);
    const o =
      old.get(k) ?? before.find((b) => !b.id && b.designation.toLowerCase() === s.designation.toLowerCase());
    if (!o) {
      out.push(`side ${s.designation} added${s.matrixNumber ? ` (matrix ${s.matrixNumber})` : ""}`);
      continue;
    }
    seen.add(key(o));
    for (const f of Object.keys(sideFieldLabels) as (keyof SideLike)[]) {
      const a = o[f] ?? "";
      const b = s[f] ?? "";
      if (a !== b) out.push(`side ${o.designation} ${sideFieldLabels[f]}: ${a || "—"} → ${b || "—"}`);
    }
  }
  for (const o of before) if (!seen.has(key(o))) out.push(`side ${o.designation} removed`);
  return out;
}
