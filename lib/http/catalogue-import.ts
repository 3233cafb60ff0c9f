import "server-only";
import type { NextRequest } from "next/server";
import { ImportRefused, maxUploadBytes, type Upload } from "../catalogue/csv";
import { CsvFormatError } from "../catalogue/csv-format";
import { AppError } from "./errors";

// The catalogue import at the HTTP edge: reading the upload out of the request, and
// turning the importer's refusals into AppErrors. lib/catalogue/csv.ts takes plain bytes
// and fields and throws its own errors.

/** The bodies readCsvUpload takes: route() refuses any other (lib/http/route.ts). */
export const uploadMediaTypes = ["multipart/form-data", "text/csv", "text/plain", "application/csv"] as const;

function tooLarge(): AppError {
  return new AppError(
    "invalid",
    413,
    `The file is larger than ${maxUploadBytes / 1024 / 1024} MB. Split it into several files.`,
    { file: ["Too large."] },
  );
}

/**
 * Reads an import request: multipart form-data with the CSV in the field `file` (other
 * fields alongside it), or the CSV itself as a text/csv body with the other fields in
 * the query string.
 */
export async function readCsvUpload(req: NextRequest): Promise<Upload> {
  const type = (req.headers.get("content-type") ?? "").toLowerCase();
  const declared = Number(req.headers.get("content-length") ?? 0);
  if (declared > maxUploadBytes) throw tooLarge();
  const query = Object.fromEntries(req.nextUrl.searchParams);
  if (type.startsWith("multipart/form-data")) {
    const form = await req.formData().catch(() => {
      throw new AppError("invalid", 422, "The upload could not be read as form data.", {
        file: ["Unreadable form data."],
      });
    });
    const file = form.get("file");
    if (!file || typeof file === "string")
      throw new AppError("invalid", 422, "Attach the CSV file in the field “file”.", {
        file: ["No file attached."],
      });
    if (file.size > maxUploadBytes) throw tooLarge();
    const fields: Record<string, string> = { ...query, fileName: file.name };
    for (const [k, v] of form.entries()) if (typeof v === "string") fields[k] = v;
    return { bytes: new Uint8Array(await file.arrayBuffer()), fields };
  }
  if (type.startsWith("text/csv") || type.startsWith("text/plain") || type.startsWith("application/csv")) {
    const bytes = new Uint8Array(await req.arrayBuffer());
    if (bytes.byteLength > maxUploadBytes) throw tooLarge();
    return { bytes, fields: query };
  }
  throw new AppError(
    "invalid",
    415,
    "Send the CSV as multipart form-data (field “file”) or as a text/csv body.",
    { file: ["No CSV in the request."] },
  );
}

/** An importer's refusal as the answer a client reads. */
export function importErrorToAppError(e: CsvFormatError | ImportRefused): AppError {
  if (e instanceof CsvFormatError) return new AppError("invalid", 422, e.message, { file: [e.message] });
  switch (e.reason) {
    case "unknown_accession":
      return new AppError("invalid", 422, e.message, { defaultAccession: ["Unknown accession."] });
    case "not_previewed":
      return new AppError("conflict", 409, e.message, { sha256: ["Does not match the file."] });
    case "changed_meanwhile":
      return new AppError("conflict", 409, e.message);
    case "has_problems":
      // The report comes back with the refusal, so the page can show what is wrong now.
      return new AppError("invalid", 422, e.message, undefined, e.report);
  }
}

/** Runs an importer call, answering its refusals as AppErrors (route() answers those). */
export async function answeringImportErrors<T>(run: () => Promise<T>): Promise<T> {
  try {
    return await run();
  } catch (e) {
    if (e instanceof CsvFormatError || e instanceof ImportRefused) throw importErrorToAppError(e);
    throw e;
  }
}
