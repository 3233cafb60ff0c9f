import { Readable } from "node:stream";
import { route } from "@/lib/http/route";
import { labelImageFile } from "@/lib/labels/images";

export const dynamic = "force-dynamic";

/** The label image as stored, under the name it was added with. */
export const GET = route("GET /api/label-images/[id]/download", async (_req, { params }) => {
  const f = await labelImageFile(String(params.id), "original");
  const ascii = f.fileName.replace(/[^\x20-\x7e]|["\\]/g, "_");
  return new Response(Readable.toWeb(f.body) as ReadableStream, {
    headers: {
      "content-type": f.contentType,
      "content-disposition": `inline; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(f.fileName)}`,
    },
  });
});
