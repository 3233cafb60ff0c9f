import type { Metadata } from "next";
import { DiscDetail } from "@/components/catalogue/disc-detail";
import { formatLabel } from "@/components/catalogue/format";
import { loadDisc } from "@/components/catalogue/load-disc";
import { LinkButton } from "@/components/ui/link-button";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";
import { transitions } from "@/lib/catalogue/workflow";

export async function generateMetadata({ params }: { params: Promise<{ id: string }> }): Promise<Metadata> {
  const disc = await loadDisc((await params).id);
  return { title: disc.shelfMark };
}

export default async function DiscPage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requirePageAccess("catalogue:read");
  const disc = await loadDisc((await params).id);
  return (
    <>
      <PageHeader
        back={{ href: "/catalogue", label: "Catalogue" }}
        title={disc.shelfMark}
        lead={[disc.labelName, disc.catalogueNumber, formatLabel(disc.format)].filter(Boolean).join(" · ")}
        actions={
          can(user.role, "catalogue:edit") ? (
            <LinkButton href={`/catalogue/${disc.id}/edit`} variant="primary" data-testid="edit-disc">
              Edit disc
            </LinkButton>
          ) : null
        }
      />
      <DiscDetail
        initial={disc}
        steps={transitions}
        user={{ id: user.id, role: user.role }}
        canAssign={can(user.role, "catalogue:assign")}
      />
    </>
  );
}
