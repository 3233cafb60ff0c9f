import { permissionTable } from "@/lib/auth/permissions";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/me", (_req, { user }) =>
  Promise.resolve({ user, may: permissionTable[user.role] }),
);
