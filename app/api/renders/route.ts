import { route } from "@/lib/http/route";
import { requestRender } from "@/lib/transfers/renders";

export const dynamic = "force-dynamic";

/** Queue a render of the side's access copy (the worker does it). */
export const POST = route("POST /api/renders", async (req, { user }) =>
  Response.json(await requestRender(user, await req.json().catch(() => ({}))), { status: 202 }),
);
