import { createAccession, listAccessions } from "@/lib/catalogue/accessions";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/accessions", async () => ({ accessions: await listAccessions() }));

export const POST = route("POST /api/accessions", async (req, { user }) => {
  const accession = await createAccession(user, await req.json().catch(() => ({})));
  return Response.json({ accession }, { status: 201 });
});
