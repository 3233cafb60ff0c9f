import { createDisc, listDiscs } from "@/lib/catalogue/discs";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/discs", async (req) =>
  listDiscs(Object.fromEntries(req.nextUrl.searchParams)),
);

export const POST = route("POST /api/discs", async (req, { user }) => {
  const disc = await createDisc(user, await req.json().catch(() => ({})));
  return Response.json({ disc }, { status: 201 });
});
