import { presetUses } from "@/lib/campaigns";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** The sides whose current curve choice rests on each version of the preset, with where they stand. */
export const GET = route("GET /api/curves/presets/[id]/uses", async (_req, { params }) =>
  presetUses(String(params.id)),
);
