import { z } from "zod";
import { listCampaigns, startCampaign } from "@/lib/campaigns";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

const listQuerySchema = z.object({ presetId: z.uuid({ error: "Unknown preset." }).optional() });

/** The lab's re-render campaigns, newest first (of one preset with ?presetId=). */
export const GET = route("GET /api/campaigns", async (req) => {
  const q = listQuerySchema.parse(Object.fromEntries(new URL(req.url).searchParams));
  return { campaigns: await listCampaigns(q) };
});

/** Start a campaign over sides resting on versions a correcting version corrects. */
export const POST = route("POST /api/campaigns", async (req, { user }) =>
  Response.json(await startCampaign(user, await req.json().catch(() => ({}))), { status: 201 }),
);
