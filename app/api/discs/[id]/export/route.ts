import { exportDisc } from "@/lib/exports";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** The disc for the repository: ?format=json (the record), premis (PREMIS 3.0 XML) or zip (the BagIt package of an approved disc, streamed). */
export const GET = route("GET /api/discs/[id]/export", async (req, { params, user }) =>
  exportDisc(String(params.id), Object.fromEntries(req.nextUrl.searchParams), user.id),
);
