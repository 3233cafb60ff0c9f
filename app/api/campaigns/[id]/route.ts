import { getCampaign } from "@/lib/campaigns";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** A campaign's progress and each side's state (the campaign page polls it). */
export const GET = route("GET /api/campaigns/[id]", async (_req, { params }) =>
  getCampaign(String(params.id)),
);
