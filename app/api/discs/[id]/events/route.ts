import { getDisc } from "@/lib/catalogue/discs";
import { listDiscEvents } from "@/lib/catalogue/workflow";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** The disc's provenance timeline, newest first. */
export const GET = route("GET /api/discs/[id]/events", async (_req, { params }) => {
  const disc = await getDisc(String(params.id));
  return { events: await listDiscEvents(disc.id) };
});
