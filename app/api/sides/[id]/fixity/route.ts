import { route } from "@/lib/http/route";
import { listFixity } from "@/lib/review";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/sides/[id]/fixity", async (_req, { params }) => ({
  checks: await listFixity(String(params.id)),
}));
