import { route } from "@/lib/http/route";
import { listRenders } from "@/lib/transfers/renders";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/sides/[id]/renders", async (_req, { params }) => ({
  renders: await listRenders(String(params.id)),
}));
