import { previewImport } from "@/lib/catalogue/csv";
import { answeringImportErrors, readCsvUpload, uploadMediaTypes } from "@/lib/http/catalogue-import";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** Checks a catalogue CSV and says what importing it would do (discs to add, changes, conflicts); writes nothing. */
export const POST = route(
  "POST /api/imports/preview",
  async (req) => answeringImportErrors(async () => previewImport(await readCsvUpload(req))),
  { accepts: uploadMediaTypes },
);
