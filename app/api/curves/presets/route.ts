import { route } from "@/lib/http/route";
import { createPreset, listPresets } from "@/lib/presets";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/curves/presets", async () => ({ presets: await listPresets() }));

export const POST = route("POST /api/curves/presets", async (req, { user }) => {
  const preset = await createPreset(user, await req.json().catch(() => ({})));
  return Response.json({ preset }, { status: 201 });
});
