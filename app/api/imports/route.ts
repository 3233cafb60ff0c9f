import { commitImport, readUpload, uploadMediaTypes } from "@/lib/catalogue/csv";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/**
 * Imports a previewed catalogue CSV (the same file, `confirm` and the preview's sha256).
 * A file with any error writes nothing and answers 422 with the preview's error list.
 */
export const POST = route(
  "POST /api/imports",
  async (req, { user }) => {
    const result = await commitImport(user, await readUpload(req));
    if (!result.ok) {
      const { report } = result;
      const message = `Nothing was imported: the file has ${report.errorCount} ${report.errorCount === 1 ? "problem" : "problems"} to fix.`;
      return Response.json({ error: { code: "invalid", message }, ...report }, { status: 422 });
    }
    const { ok, ...done } = result;
    return Response.json(done, { status: 201 });
  },
  { accepts: uploadMediaTypes },
);
