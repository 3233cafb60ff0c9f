import { Readable } from "node:stream";
import { route } from "@/lib/http/route";
import { labelImageFile } from "@/lib/labels/images";

export const dynamic = "force-dynamic";

/** The label image's thumbnail (JPEG, made on the server when the image was stored). */
export const GET = route("GET /api/label-images/[id]/thumbnail", async (_req, { params }) => {
  const f = await labelImageFile(String(params.id), "thumbnail");
  return new Response(Readable.toWeb(f.body) as ReadableStream, {
    headers: { "content-type": f.contentType, "cache-control": "private, max-age=3600" },
  });
});
