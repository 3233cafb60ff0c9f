import { route } from "@/lib/http/route";
import { signUploadParts } from "@/lib/transfers/uploads";

export const dynamic = "force-dynamic";

export const POST = route("POST /api/uploads/parts", async (req, { user }) =>
  signUploadParts(user, await req.json().catch(() => ({}))),
);
