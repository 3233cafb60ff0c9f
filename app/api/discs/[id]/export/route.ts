import { exportDisc } from "@/lib/exports";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** The disc for the repository: ?format=json (the record), premis (PREMIS 3.0 XML) or zip (package of an approved disc). */
export const GET = route("GET /api/discs/[id]/export", async (req, { params }) =>
  exportDisc(String(params.id), Object.fromEntries(req.nextUrl.searchParams)),
);
