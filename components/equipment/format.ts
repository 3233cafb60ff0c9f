import { type ItemDescription, itemName, tipText } from "@/lib/equipment/describe";

export { tipText };

/** "Vellum Audio S-30 · SN ST-301 · 3.0 mil (76.2 µm) · truncated elliptical": an item as the pickers offer it. */
export function itemLabel(i: ItemDescription): string {
  return [
    itemName(i),
    i.serial && `SN ${i.serial}`,
    i.kind === "stylus" && tipText(i.stylusTipUm),
    i.stylusShape,
  ]
    .filter(Boolean)
    .join(" · ");
}

/** "12.4 h" or "35 min": a stylus's hours of use as the bench speaks of them. */
export function hoursText(hours: number): string {
  if (hours <= 0) return "none yet";
  if (hours < 1) return `${Math.max(1, Math.round(hours * 60))} min`;
  return `${hours.toFixed(hours < 10 ? 1 : 0)} h`;
}

/** "12 days", "today": how old a calibration was. */
export function ageText(days: number): string {
  if (days <= 0) return "the same day";
  if (days === 1) return "1 day";
  if (days < 60) return `${days} days`;
  return `${Math.round(days / 30.44)} months`;
}
