import type { Metadata } from "next";
import Link from "next/link";
import { ImportPanel } from "@/components/catalogue/import-panel";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { listAccessions } from "@/lib/catalogue/accessions";
import { catalogueColumnSpecs, catalogueTemplateCsv, maxImportRows } from "@/lib/catalogue/csv-format";

export const metadata: Metadata = { title: "Import discs" };

export default async function ImportPage() {
  await requirePageAccess("catalogue:edit");
  const accessions = await listAccessions();
  return (
    <>
      <PageHeader
        title="Import discs from a spreadsheet"
        lead="Check a CSV against the catalogue, fix what it points out, then import every disc in one step: all of them go in together, or none do."
        actions={
          <Link
            href="/catalogue"
            className="inline-flex h-10 items-center justify-center rounded-md border border-paper-edge bg-white px-4 text-sm font-medium text-ink transition-colors hover:border-ink-faint"
          >
            Back to the catalogue
          </Link>
        }
      />
      <ImportPanel
        accessions={accessions.map((a) => ({ id: a.id, identifier: a.identifier, source: a.source }))}
        columns={catalogueColumnSpecs.map((c) => ({ name: c.name, hint: c.hint, required: "required" in c && c.required === true }))}
        templateCsv={catalogueTemplateCsv()}
        maxRows={maxImportRows}
      />
    </>
  );
}
