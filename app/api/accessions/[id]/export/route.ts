import { exportAccession } from "@/lib/exports";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** A whole accession for the repository: ?format=json or premis. */
export const GET = route("GET /api/accessions/[id]/export", async (req, { params }) =>
  exportAccession(String(params.id), Object.fromEntries(req.nextUrl.searchParams)),
);
