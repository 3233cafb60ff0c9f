import { route } from "@/lib/http/route";
import { listEvents } from "@/lib/provenance/audit";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/provenance/events", async (req) => ({
  events: await listEvents(Object.fromEntries(req.nextUrl.searchParams)),
}));
