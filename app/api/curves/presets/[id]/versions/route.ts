import { route } from "@/lib/http/route";
import { listPresetVersions } from "@/lib/presets";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/curves/presets/[id]/versions", async (_req, { params }) => ({
  versions: await listPresetVersions(String(params.id)),
}));
