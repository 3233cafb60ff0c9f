// BagIt 1.0 (RFC 8493) tag files: pure text making, no I/O, no framework. The packager
// (lib/exports/bag.ts) fills them with what it read and checked.

/** RFC 8493 §2.1.1: the bag declaration, in UTF-8. */
export const bagitTxt = "BagIt-Version: 1.0\nTag-File-Character-Encoding: UTF-8\n";

/**
 * A file path as a manifest writes it (RFC 8493 §2.1.3): relative to the bag's base
 * directory, "/" as separator, with CR, LF and "%" percent-encoded so each line holds one path.
 */
export function manifestPath(p: string): string {
  return p.replace(/%/g, "%25").replace(/\r/g, "%0D").replace(/\n/g, "%0A");
}

/** RFC 8493 §2.1.3 / §2.2.1: one line per file, "checksum  path", LF line ends, sorted by path for a stable bag. */
export function manifestText(entries: { path: string; digest: string }[]): string {
  return [...entries]
    .sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0))
    .map((e) => `${e.digest}  ${manifestPath(e.path)}\n`)
    .join("");
}

/** RFC 8493 §2.2.2: Payload-Oxum is "OctetCount.StreamCount" of the payload. */
export function payloadOxum(files: { bytes: number }[]): string {
  return `${files.reduce((n, f) => n + f.bytes, 0)}.${files.length}`;
}

/** RFC 8493 §2.2.2 Bag-Size: a size a person reads, e.g. "12.4 GB" (decimal units). */
export function bagSize(bytes: number): string {
  const units = ["bytes", "KB", "MB", "GB", "TB"];
  let v = bytes;
  let i = 0;
  while (v >= 1000 && i < units.length - 1) {
    v /= 1000;
    i++;
  }
  return i === 0 ? `${bytes} bytes` : `${v.toFixed(v < 10 ? 2 : 1)} ${units[i]}`;
}

/**
 * bag-info.txt (RFC 8493 §2.2.2): "Label: value" lines. A value is written on one line:
 * line breaks a person typed (an address) become "; ", and labels with no value are left out.
 */
export function bagInfoText(fields: [label: string, value: string | null | undefined][]): string {
  return fields
    .filter(([, v]) => v !== null && v !== undefined && v.trim() !== "")
    .map(([k, v]) => `${k}: ${v!.trim().replace(/\s*[\r\n]+\s*/g, "; ")}\n`)
    .join("");
}

/** "2026-12-03" (RFC 8493 §2.2.2 Bagging-Date: YYYY-MM-DD). */
export const baggingDate = (at: Date) => at.toISOString().slice(0, 10);

/** "20261203T081500Z": the time in a bag's name, so each bag of a disc has its own. */
export const bagStamp = (at: Date) => at.toISOString().replace(/[-:]/g, "").replace(/\.\d+/, "");
