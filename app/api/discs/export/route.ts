import { exportCatalogueCsv, exportFileName } from "@/lib/catalogue/csv";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** The catalogue view that GET /api/discs would list (all pages), as catalogue CSV. */
export const GET = route("GET /api/discs/export", async (req) => {
  const csv = await exportCatalogueCsv(Object.fromEntries(req.nextUrl.searchParams));
  return new Response(csv, {
    headers: {
      "content-type": "text/csv; charset=utf-8",
      "content-disposition": `attachment; filename="${exportFileName()}"`,
      "cache-control": "no-store",
    },
  });
});
