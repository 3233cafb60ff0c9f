import type { Metadata } from "next";
import Link from "next/link";
import { DiscForm } from "@/components/catalogue/disc-form";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "New disc" };

export default async function NewDiscPage({ searchParams }: { searchParams: Promise<{ accession?: string }> }) {
  await requirePageAccess("catalogue:edit");
  return (
    <>
      <p className="mb-2 text-sm">
        <Link href="/catalogue" className="text-ink-soft underline-offset-2 hover:text-ink hover:underline">
          ← Catalogue
        </Link>
      </p>
      <PageHeader title="New disc" lead="Log the disc as it reads in your hand: shelf mark, label, catalogue number, and each side's matrix number and take." />
      <DiscForm accessionId={(await searchParams).accession} />
    </>
  );
}
