import { route } from "@/lib/http/route";
import { completeLabelImage } from "@/lib/labels/images";

export const dynamic = "force-dynamic";

/** Accepts the stored label image after checking its size, SHA-256 and type, and makes its thumbnail. */
export const POST = route("POST /api/label-images/[id]/complete", async (req, { user, params }) =>
  Response.json(await completeLabelImage(user, String(params.id), await req.json().catch(() => ({}))), {
    status: 201,
  }),
);
