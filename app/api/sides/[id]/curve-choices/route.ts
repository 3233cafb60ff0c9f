import { route } from "@/lib/http/route";
import { listCurveChoices } from "@/lib/transfers/curve-choices";

export const dynamic = "force-dynamic";

/** Every curve considered for the side, newest (the current one) first, with the preset values as they were. */
export const GET = route("GET /api/sides/[id]/curve-choices", async (_req, { params }) => ({
  choices: await listCurveChoices(String(params.id)),
}));
