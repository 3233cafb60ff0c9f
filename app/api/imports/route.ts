import { commitImport } from "@/lib/catalogue/csv";
import { answeringImportErrors, readCsvUpload, uploadMediaTypes } from "@/lib/http/catalogue-import";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/**
 * Imports a previewed catalogue CSV (the same file, `confirm` and the preview's sha256):
 * new discs are added and catalogued ones updated, all in one transaction. A file with
 * any problem or conflict writes nothing and answers 422 with the report in the error's
 * details.
 */
export const POST = route(
  "POST /api/imports",
  async (req, { user }) => {
    const done = await answeringImportErrors(async () => commitImport(user, await readCsvUpload(req)));
    return Response.json(done, { status: 201 });
  },
  { accepts: uploadMediaTypes },
);
