import { route } from "@/lib/http/route";
import { downloadUrl } from "@/lib/transfers/renders";

export const dynamic = "force-dynamic";

/** Redirects to a short-lived URL of the access copy (byte ranges work on it, for the bench's A/B). ?json=1 answers the URL instead. */
export const GET = route("GET /api/renders/[id]/download", async (req, { params }) => {
  const url = await downloadUrl("render", String(params.id));
  return req.nextUrl.searchParams.get("json") ? { url } : Response.redirect(url, 302);
});
