import { transitionSide } from "@/lib/catalogue/workflow";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

// Every signed-in role reaches the handler; which step each role may take is decided
// by the workflow table (lib/catalogue/workflow.ts), which names actions of the
// permission table.
export const POST = route("POST /api/sides/[id]/transition", async (req, { params, user }) =>
  transitionSide(user, String(params.id), await req.json().catch(() => ({}))),
);
