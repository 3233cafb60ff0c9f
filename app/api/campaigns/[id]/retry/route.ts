import { retryCampaign } from "@/lib/campaigns";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** Retry the campaign's failed sides (all, or those named in `sideIds`). */
export const POST = route("POST /api/campaigns/[id]/retry", async (req, { user, params }) =>
  retryCampaign(user, String(params.id), await req.json().catch(() => ({}))),
);
