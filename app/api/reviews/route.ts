import { route } from "@/lib/http/route";
import { listReviewQueue } from "@/lib/review";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/reviews", async () => ({ sides: await listReviewQueue() }));
