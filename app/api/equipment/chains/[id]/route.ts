import { getChain, updateChain } from "@/lib/equipment/chains";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/equipment/chains/[id]", async (_req, { params }) =>
  getChain(String(params.id)),
);

export const PATCH = route("PATCH /api/equipment/chains/[id]", async (req, { params, user }) => ({
  chain: await updateChain(user, String(params.id), await req.json().catch(() => ({}))),
}));
