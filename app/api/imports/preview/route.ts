import { previewImport, readUpload, uploadMediaTypes } from "@/lib/catalogue/csv";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** Checks a catalogue CSV and says what importing it would do; writes nothing. */
export const POST = route("POST /api/imports/preview", async (req) => previewImport(await readUpload(req)), {
  accepts: uploadMediaTypes,
});
