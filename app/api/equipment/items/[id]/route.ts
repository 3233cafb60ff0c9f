import { getItem, updateItem } from "@/lib/equipment/register";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/equipment/items/[id]", async (_req, { params }) =>
  getItem(String(params.id)),
);

export const PATCH = route("PATCH /api/equipment/items/[id]", async (req, { params, user }) => ({
  item: await updateItem(user, String(params.id), await req.json().catch(() => ({}))),
}));
