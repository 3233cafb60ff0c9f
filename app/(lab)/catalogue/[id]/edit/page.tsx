import type { Metadata } from "next";
import { DiscForm } from "@/components/catalogue/disc-form";
import { loadDisc } from "@/components/catalogue/load-disc";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export async function generateMetadata({ params }: { params: Promise<{ id: string }> }): Promise<Metadata> {
  const disc = await loadDisc((await params).id);
  return { title: `Edit ${disc.shelfMark}` };
}

export default async function EditDiscPage({ params }: { params: Promise<{ id: string }> }) {
  await requirePageAccess("catalogue:edit");
  const disc = await loadDisc((await params).id);
  return (
    <>
      <PageHeader
        back={{ href: `/catalogue/${disc.id}`, label: disc.shelfMark }}
        title={`Edit ${disc.shelfMark}`}
        lead="If someone else saves this disc while you work, you will see their change beside yours before anything is overwritten."
      />
      <DiscForm initial={disc} />
    </>
  );
}
