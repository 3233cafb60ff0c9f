import type { Metadata } from "next";
import { Suspense } from "react";
import { CatalogueTable, ExportViewLink } from "@/components/catalogue/catalogue-table";
import { LinkButton } from "@/components/ui/link-button";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";

export const metadata: Metadata = { title: "Catalogue" };

export default async function CataloguePage() {
  const user = await requirePageAccess("catalogue:read");
  const canEdit = can(user.role, "catalogue:edit");
  return (
    <>
      <PageHeader
        title="Catalogue"
        lead="Every disc the lab holds, with its sides and where each side stands. Filter, search and sort; the address keeps the view, so you can share it."
        actions={
          <div className="flex flex-wrap gap-2">
            {canEdit ? (
              <LinkButton href="/catalogue/new" variant="primary" data-testid="new-disc">
                New disc
              </LinkButton>
            ) : null}
            {canEdit ? <LinkButton href="/catalogue/import">Import spreadsheet</LinkButton> : null}
            <Suspense>
              <ExportViewLink />
            </Suspense>
            <LinkButton href="/catalogue/accessions">Accessions</LinkButton>
          </div>
        }
      />
      <Suspense>
        <CatalogueTable
          canAssign={can(user.role, "catalogue:assign")}
          self={user.role === "engineer" ? { id: user.id, name: user.name } : null}
        />
      </Suspense>
    </>
  );
}
