import { route } from "@/lib/http/route";
import { listOpenInvitations, listPeople } from "@/lib/people/accounts";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/users", async () => {
  const [people, invitations] = await Promise.all([listPeople(), listOpenInvitations()]);
  return { people, invitations };
});
