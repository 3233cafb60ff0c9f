import { getDisc, updateDisc } from "@/lib/catalogue/discs";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/discs/[id]", async (_req, { params }) => ({
  disc: await getDisc(String(params.id)),
}));

export const PATCH = route("PATCH /api/discs/[id]", async (req, { params, user }) => ({
  disc: await updateDisc(user, String(params.id), await req.json().catch(() => ({}))),
}));
