import { cancelCampaign } from "@/lib/campaigns";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** Cancel what has not started: queued renders; renders under way finish. */
export const POST = route("POST /api/campaigns/[id]/cancel", async (_req, { user, params }) =>
  cancelCampaign(user, String(params.id)),
);
