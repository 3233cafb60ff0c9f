import { route } from "@/lib/http/route";
import { decideReview, listReviews } from "@/lib/review";

export const dynamic = "force-dynamic";

/** The curator's decision: {decision: "approved" | "returned", reason?}. */
export const POST = route("POST /api/sides/[id]/review", async (req, { params, user }) =>
  decideReview(user, String(params.id), await req.json().catch(() => ({}))),
);

export const GET = route("GET /api/sides/[id]/review", async (_req, { params }) => ({
  reviews: await listReviews(String(params.id)),
}));
