// How the register's items are written out: names, tip sizes, and the capture chain's lines
// of a BWF coding history. Pure: the pages, the server, the render worker and the exports
// all write an item the same way.
import { formatCodingHistoryLine } from "../audio/bext";
import { chainOrder, type EquipmentKindName, MICROMETRES_PER_MIL } from "../validation/equipment";

/** An item as a transfer used it (the snapshot the transfer keeps) or as the register holds it. */
export interface ItemDescription {
  kind: EquipmentKindName;
  make: string;
  model: string;
  serial: string;
  /** numeric comes back from pg as text. */
  stylusTipUm: number | string | null;
  stylusShape: string | null;
}

/** "3.0 mil (76.2 µm)": the register keeps µm; the trade speaks of mil for coarse-groove styli. */
export function tipText(um: number | string | null | undefined): string {
  if (um === null || um === undefined || um === "") return "";
  const v = Number(um);
  const mil = v / MICROMETRES_PER_MIL;
  const milText = mil >= 10 ? mil.toFixed(1) : mil.toFixed(2).replace(/0$/, "");
  const umText = v >= 100 ? v.toFixed(0) : v.toFixed(1);
  return `${milText} mil (${umText} µm)`;
}

/** "Make Model", as the lab writes them. */
export function itemName(item: Pick<ItemDescription, "make" | "model">): string {
  return [item.make, item.model].filter(Boolean).join(" ");
}

/** "Make Model SN 4411; 3.0 mil (76.2 µm) truncated elliptical": what a line of a record names. */
export function itemText(item: ItemDescription): string {
  const parts = [itemName(item) + (item.serial ? ` SN ${item.serial}` : "")];
  if (item.kind === "stylus") {
    const tip = [tipText(item.stylusTipUm), item.stylusShape ?? ""].filter(Boolean).join(" ");
    if (tip) parts.push(tip);
  }
  return parts.join(" ");
}

/** Items in the order a chain is read, from the disc to the file. */
export function inChainOrder<T extends { kind: EquipmentKindName }>(items: readonly T[]): T[] {
  return [...items].sort((a, b) => chainOrder.indexOf(a.kind) - chainOrder.indexOf(b.kind));
}

export interface CaptureFacts {
  sampleRateHz: number;
  bitsPerSample: number;
  channels: number;
  /** "pcm" or "float" (lib/audio's encodings). */
  encoding: string;
  measuredSpeedRpm: number | string | null;
}

const modeWord = (channels: number) => (channels === 1 ? "mono" : "stereo");

/**
 * The capture's lines of a coding history in EBU R98's form, built from the items a transfer
 * was made with: the disc replay as an analogue source (cartridge, stylus, turntable, the
 * measured speed, then the arm, the preamplifier and anything else), then the converter's
 * A/D line at the transfer's rate, word length and mode. "A=ANALOGUE,M=mono,T=…" is R98's
 * line for an analogue source; the T= text is free, its parts separated by semicolons.
 */
export function captureCodingHistory(items: readonly ItemDescription[], capture: CaptureFacts): string {
  const of = (kind: EquipmentKindName) => items.filter((i) => i.kind === kind);
  const named = (kind: EquipmentKindName, word: string) => of(kind).map((i) => `${word} ${itemText(i)}`);
  const speed =
    capture.measuredSpeedRpm === null || capture.measuredSpeedRpm === ""
      ? []
      : [`measured speed ${Number(capture.measuredSpeedRpm)} rpm`];
  const analogue = [
    ...named("cartridge", "cartridge"),
    ...named("stylus", "stylus"),
    ...named("turntable", "turntable"),
    ...speed,
    ...named("tonearm", "tonearm"),
    ...named("preamplifier", "preamplifier"),
    ...named("other", "with"),
    "flat (no playback equalization)",
  ];
  const converters = of("converter");
  return (
    formatCodingHistoryLine({
      algorithm: "ANALOGUE",
      mode: modeWord(capture.channels),
      text: analogue.join("; "),
    }) +
    formatCodingHistoryLine({
      algorithm: "PCM",
      samplingHz: capture.sampleRateHz,
      wordLength: capture.bitsPerSample,
      mode: modeWord(capture.channels),
      text: [
        ...converters.map((c) => `${itemText(c)} A/D`),
        "flat transfer",
        capture.encoding === "float" ? "IEEE float" : null,
      ]
        .filter(Boolean)
        .join("; "),
    })
  );
}
