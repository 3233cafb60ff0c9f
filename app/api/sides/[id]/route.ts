import { getSideWithDisc } from "@/lib/catalogue/sides";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/sides/[id]", async (_req, { params }) =>
  getSideWithDisc(String(params.id)),
);
