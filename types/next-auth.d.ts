import type { Role } from "../lib/auth/roles";

declare module "next-auth" {
  interface Session {
    user?: { id?: string; name?: string | null; email?: string | null; role?: Role };
  }
}

declare module "next-auth/jwt" {
  interface JWT {
    uid?: string;
    role?: string;
  }
}
