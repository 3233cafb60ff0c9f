import { createItem, listItems } from "@/lib/equipment/register";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** The register: every item, with a stylus's hours of use and each item's latest finding. */
export const GET = route("GET /api/equipment/items", async () => ({ items: await listItems() }));

export const POST = route("POST /api/equipment/items", async (req, { user }) =>
  Response.json({ item: await createItem(user, await req.json().catch(() => ({}))) }, { status: 201 }),
);
