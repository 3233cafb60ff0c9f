import { recallCsv, transfersWithItem } from "@/lib/equipment/recall";
import { attachmentDisposition } from "@/lib/http/content-disposition";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** Which transfers used this item: ?from=YYYY-MM-DD&to=YYYY-MM-DD&currentOnly=1, and &format=csv for the file. */
export const GET = route("GET /api/equipment/items/[id]/transfers", async (req, { params }) => {
  const result = await transfersWithItem(String(params.id), Object.fromEntries(req.nextUrl.searchParams));
  if (result.format !== "csv") return result;
  const name = `recall-${result.item.name}-${result.filters.from ?? "start"}-to-${result.filters.to ?? "now"}.csv`;
  return new Response(recallCsv(result), {
    headers: {
      "content-type": "text/csv; charset=utf-8",
      "content-disposition": attachmentDisposition(name.replace(/[^A-Za-z0-9._-]+/g, "_"), "recall.csv"),
      "cache-control": "no-store",
    },
  });
});
