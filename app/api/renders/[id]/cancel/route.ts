import { route } from "@/lib/http/route";
import { cancelRender } from "@/lib/transfers/renders";

export const dynamic = "force-dynamic";

/** Cancel a queued or running render (a stalled one): the engineer the side is assigned to. */
export const POST = route("POST /api/renders/[id]/cancel", async (_req, { user, params }) =>
  cancelRender(user, String(params.id)),
);
