import { updateAccession } from "@/lib/catalogue/accessions";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const PATCH = route("PATCH /api/accessions/[id]", async (req, { params, user }) => ({
  accession: await updateAccession(user, String(params.id), await req.json().catch(() => ({}))),
}));
