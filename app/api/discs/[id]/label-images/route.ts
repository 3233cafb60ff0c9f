import { route } from "@/lib/http/route";
import { listLabelImages, startLabelImage } from "@/lib/labels/images";

export const dynamic = "force-dynamic";

/** The disc's stored label images, with their thumbnail and download URLs. */
export const GET = route("GET /api/discs/[id]/label-images", async (_req, { params }) => ({
  labelImages: await listLabelImages(String(params.id)),
}));

/** Starts a label image: its id and a presigned URL to PUT the file straight into the bucket. */
export const POST = route("POST /api/discs/[id]/label-images", async (req, { user, params }) =>
  Response.json(await startLabelImage(user, String(params.id), await req.json().catch(() => ({}))), {
    status: 201,
  }),
);
