import { route } from "@/lib/http/route";
import { listTransfers } from "@/lib/transfers/renders";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/sides/[id]/transfers", async (_req, { params }) => ({
  transfers: await listTransfers(String(params.id)),
}));
