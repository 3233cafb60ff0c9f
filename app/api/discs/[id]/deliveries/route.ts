import { listDeliveries, requestDelivery } from "@/lib/exports";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** The bags of this disc written into the delivery bucket, newest first, each with where it stands. */
export const GET = route("GET /api/discs/[id]/deliveries", async (_req, { params }) => ({
  deliveries: await listDeliveries("disc", String(params.id)),
}));

/** Writes the disc's BagIt package into the delivery bucket (in the background): answers the delivery's id. */
export const POST = route("POST /api/discs/[id]/deliveries", async (_req, { params, user }) =>
  Response.json(await requestDelivery(user.id, "disc", String(params.id)), { status: 202 }),
);
