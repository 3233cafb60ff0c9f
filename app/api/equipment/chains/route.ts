import { createChain, listChains } from "@/lib/equipment/chains";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** The saved chains with their items and latest calibration; ?retired=1 lists retired ones too. */
export const GET = route("GET /api/equipment/chains", async (req) => ({
  chains: await listChains({ includeRetired: req.nextUrl.searchParams.get("retired") === "1" }),
}));

export const POST = route("POST /api/equipment/chains", async (req, { user }) =>
  Response.json({ chain: await createChain(user, await req.json().catch(() => ({}))) }, { status: 201 }),
);
