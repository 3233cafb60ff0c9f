import { route } from "@/lib/http/route";
import { abortUpload } from "@/lib/transfers/uploads";

export const dynamic = "force-dynamic";

export const POST = route("POST /api/uploads/abort", async (req, { user }) =>
  abortUpload(user, await req.json().catch(() => ({}))),
);
