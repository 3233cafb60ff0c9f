import { exportAccession } from "@/lib/exports";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** A whole accession for the repository: ?format=json, premis, or zip (the BagIt package of its approved discs, streamed). */
export const GET = route("GET /api/accessions/[id]/export", async (req, { params, user }) =>
  exportAccession(String(params.id), Object.fromEntries(req.nextUrl.searchParams), user.id),
);
