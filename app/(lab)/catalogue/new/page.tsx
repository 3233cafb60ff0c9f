import type { Metadata } from "next";
import { DiscForm } from "@/components/catalogue/disc-form";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "New disc" };

export default async function NewDiscPage({
  searchParams,
}: {
  searchParams: Promise<{ accession?: string }>;
}) {
  await requirePageAccess("catalogue:edit");
  return (
    <>
      <PageHeader
        back={{ href: "/catalogue", label: "Catalogue" }}
        title="New disc"
        lead="Log the disc as it reads in your hand: shelf mark, label, catalogue number, and each side's matrix number and take."
      />
      <DiscForm accessionId={(await searchParams).accession} />
    </>
  );
}
