import { route } from "@/lib/http/route";
import { measurePitchReference } from "@/lib/transfers/pitch-reference";

export const dynamic = "force-dynamic";

/** The spectrum peak near a named reference in a window of the side's flat transfer, and the cut speed it implies. */
export const POST = route("POST /api/sides/[id]/pitch-reference", async (req, { params }) =>
  measurePitchReference(String(params.id), await req.json().catch(() => ({}))),
);
