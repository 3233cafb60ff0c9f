import type { Metadata } from "next";
import { ImportPanel } from "@/components/catalogue/import-panel";
import { LinkButton } from "@/components/ui/link-button";
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
        actions={<LinkButton href="/catalogue">Back to the catalogue</LinkButton>}
      />
      <ImportPanel
        accessions={accessions.map((a) => ({ id: a.id, identifier: a.identifier, source: a.source }))}
        columns={catalogueColumnSpecs.map((c) => ({
          name: c.name,
          hint: c.hint,
          required: "required" in c && c.required === true,
        }))}
        templateCsv={catalogueTemplateCsv()}
        maxRows={maxImportRows}
      />
    </>
  );
}
