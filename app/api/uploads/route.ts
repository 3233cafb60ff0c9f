import { route } from "@/lib/http/route";
import { listUploadedParts, startUpload } from "@/lib/transfers/uploads";

export const dynamic = "force-dynamic";

/** Starts a multipart upload of a flat transfer straight to the bucket: the upload's id, the part size and the first presigned part URLs. */
export const POST = route("POST /api/uploads", async (req, { user }) =>
  Response.json(await startUpload(user, await req.json().catch(() => ({}))), { status: 201 }),
);

/** The parts already stored (to resume after a failure): ?uploadId=… */
export const GET = route("GET /api/uploads", async (req, { user }) =>
  listUploadedParts(user, Object.fromEntries(req.nextUrl.searchParams)),
);
