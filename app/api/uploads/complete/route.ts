import { route } from "@/lib/http/route";
import { completeUpload } from "@/lib/transfers/uploads";

export const dynamic = "force-dynamic";

/** Completes the upload and accepts the transfer only after checking its size, SHA-256 and header. */
export const POST = route("POST /api/uploads/complete", async (req, { user }) =>
  Response.json(await completeUpload(user, await req.json().catch(() => ({}))), { status: 201 }),
);
