import { listQueue } from "@/lib/catalogue/workflow";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** The signed-in engineer's own queue. */
export const GET = route("GET /api/queue", async (_req, { user }) => ({ sides: await listQueue(user.id) }));
