import type { Role } from "../lib/auth/roles";

declare module "next-auth" {
  interface Session {
    user?: { id?: string; name?: string | null; email?: string | null; role?: Role; sessionVersion?: number };
  }
}

declare module "next-auth/jwt" {
  interface JWT {
    uid?: string;
    role?: string;
    /** The person's session version when this session began (lib/auth/session-version.ts). */
    sv?: number;
  }
}
