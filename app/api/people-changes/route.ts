import { route } from "@/lib/http/route";
import { listPeopleChanges } from "@/lib/people/accounts";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/people-changes", async () => ({ changes: await listPeopleChanges(200) }));
