import { route } from "@/lib/http/route";
import { chooseCurve } from "@/lib/transfers/curve-choices";

export const dynamic = "force-dynamic";

/** Choose (or change) the playback curve of one side, both sides, or a set of sides. */
export const POST = route("POST /api/curve-choices", async (req, { user }) => {
  const result = await chooseCurve(user, await req.json().catch(() => ({})));
  return Response.json(result, { status: 201 });
});
