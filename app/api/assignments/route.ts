import { assignSides } from "@/lib/catalogue/workflow";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const POST = route("POST /api/assignments", async (req, { user }) =>
  assignSides(user, await req.json().catch(() => ({}))),
);
