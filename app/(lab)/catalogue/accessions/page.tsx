import type { Metadata } from "next";
import { AccessionsView } from "@/components/catalogue/accessions-view";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";

export const metadata: Metadata = { title: "Accessions" };

export default async function AccessionsPage() {
  const user = await requirePageAccess("catalogue:read");
  return (
    <>
      <PageHeader
        back={{ href: "/catalogue", label: "Catalogue" }}
        title="Accessions"
        lead="Each batch of discs the lab received: where it came from and when. Open one to see its discs in the catalogue."
      />
      <AccessionsView canEdit={can(user.role, "catalogue:edit")} />
    </>
  );
}
