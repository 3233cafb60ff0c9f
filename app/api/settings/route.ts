import { route } from "@/lib/http/route";
import { getSettings, updateSettings } from "@/lib/settings";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/settings", async () => getSettings());

export const PATCH = route("PATCH /api/settings", async (req, { user }) =>
  updateSettings(user, await req.json().catch(() => ({}))),
);
