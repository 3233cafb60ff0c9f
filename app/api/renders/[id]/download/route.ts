import { route } from "@/lib/http/route";
import { downloadUrl } from "@/lib/transfers/renders";

export const dynamic = "force-dynamic";

/** Redirects to a short-lived URL of the access copy. */
export const GET = route("GET /api/renders/[id]/download", async (_req, { params }) => Response.redirect(await downloadUrl("render", String(params.id)), 302));
