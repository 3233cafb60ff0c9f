import { createHash, randomBytes } from "node:crypto";

/** A single-use token for a link: the person gets `token`, the database keeps only its SHA-256. */
export function newToken(): { token: string; hash: string } {
  const token = randomBytes(32).toString("base64url");
  return { token, hash: hashToken(token) };
}

export function hashToken(token: string): string {
  return createHash("sha256").update(token, "utf8").digest("hex");
}
