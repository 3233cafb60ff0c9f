import { listDeliveries, requestDelivery } from "@/lib/exports";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** The bags of this accession written into the delivery bucket, newest first, each with where it stands. */
export const GET = route("GET /api/accessions/[id]/deliveries", async (_req, { params }) => ({
  deliveries: await listDeliveries("accession", String(params.id)),
}));

/** Writes the accession's BagIt package into the delivery bucket (in the background): answers the delivery's id. */
export const POST = route("POST /api/accessions/[id]/deliveries", async (_req, { params, user }) =>
  Response.json(await requestDelivery(user.id, "accession", String(params.id)), { status: 202 }),
);
