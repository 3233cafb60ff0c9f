import { route } from "@/lib/http/route";
import { getPreset, updatePreset } from "@/lib/presets";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/curves/presets/[id]", async (_req, { params }) => ({
  preset: await getPreset(String(params.id)),
}));

export const PATCH = route("PATCH /api/curves/presets/[id]", async (req, { params, user }) => ({
  preset: await updatePreset(user, String(params.id), await req.json().catch(() => ({}))),
}));
