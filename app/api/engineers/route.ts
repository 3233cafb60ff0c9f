import { listEngineers } from "@/lib/catalogue/workflow";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/engineers", async () => ({ engineers: await listEngineers() }));
