import { recordFinding } from "@/lib/equipment/recall";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** Records a finding; a fault answers with the transfers made since the item's last good check. */
export const POST = route("POST /api/equipment/items/[id]/findings", async (req, { params, user }) =>
  Response.json(await recordFinding(user, String(params.id), await req.json().catch(() => ({}))), {
    status: 201,
  }),
);
