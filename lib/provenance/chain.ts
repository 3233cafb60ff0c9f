import { createHash } from "node:crypto";

/**
 * The provenance chain's canonical form (version 1): an event's content as JSON with
 * object keys sorted and undefined members left out; its hash is
 * SHA-256(previous hash + "\n" + canonical content), hex. The first event follows the
 * genesis hash of 64 zeros. The catalogue migration hashes the folded people changes the
 * same way; keep the two identical.
 */
export const genesisHash = "0".repeat(64);

export function canonicalJson(value: unknown): string {
  if (value === null || typeof value !== "object") return JSON.stringify(value ?? null);
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(",")}]`;
  const entries = Object.entries(value as Record<string, unknown>)
    .filter(([, v]) => v !== undefined)
    .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
  return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(",")}}`;
}

export interface ChainedContent {
  id: string;
  at: string;
  actorId: string | null;
  kind: string;
  subjectType: string;
  subjectId: string | null;
  discId: string | null;
  payload: unknown;
}

export function eventHash(prevHash: string, content: ChainedContent): string {
  return createHash("sha256")
    .update(`${prevHash}\n${canonicalJson(content)}`, "utf8")
    .digest("hex");
}
