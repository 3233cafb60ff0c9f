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
        lead={
          "Bring back an exported spreadsheet, or a new one: rows with a catalogued shelf mark update " +
          "that disc, the others add discs. See every change before it is made; all of it goes in " +
          "together, or nothing does."
        }
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
