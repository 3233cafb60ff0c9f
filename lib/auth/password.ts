import bcrypt from "bcryptjs";

// bcrypt with cost 12 (about a quarter second per hash here): slow enough to make
// guessing expensive, quick enough for a sign-in. OWASP password storage guidance
// accepts bcrypt at cost ≥ 10.
const cost = 12;

export function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, cost);
}

export function verifyPassword(password: string, hash: string): Promise<boolean> {
  return bcrypt.compare(password, hash);
}

let decoy: Promise<string> | undefined;

/** Spends the same time as a real check when the address is unknown, so timing does not tell. */
export async function verifyAgainstDecoy(password: string): Promise<false> {
  decoy ??= bcrypt.hash(`decoy-${Math.random()}`, cost);
  await bcrypt.compare(password, await decoy);
  return false;
}
