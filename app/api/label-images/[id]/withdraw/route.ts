import { route } from "@/lib/http/route";
import { withdrawLabelImage } from "@/lib/labels/images";

export const dynamic = "force-dynamic";

/** Withdraws a label image added by mistake, with a reason: it leaves the disc's page, record and bags. */
export const POST = route("POST /api/label-images/[id]/withdraw", async (req, { user, params }) =>
  Response.json(await withdrawLabelImage(user, String(params.id), await req.json().catch(() => ({})))),
);
