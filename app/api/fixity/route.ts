import { openFixityAlerts, requestDiscFixity } from "@/lib/fixity/requests";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** Check every stored object of one disc now (the worker reads them back). */
export const POST = route("POST /api/fixity", async (req) =>
  Response.json(await requestDiscFixity(await req.json().catch(() => ({}))), { status: 202 }),
);

/** Objects whose latest check failed: the audit page's alerts. */
export const GET = route("GET /api/fixity", async () => ({ alerts: await openFixityAlerts() }));
