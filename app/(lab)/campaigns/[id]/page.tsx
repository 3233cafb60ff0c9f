import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { CampaignView } from "@/components/campaigns/campaign-view";
import { BackLink } from "@/components/ui/link-button";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";

export const metadata: Metadata = { title: "Re-render campaign" };

const UUID = /^[0-9a-f-]{36}$/i;

export default async function CampaignPage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requirePageAccess("curves:read");
  const { id } = await params;
  if (!UUID.test(id)) notFound();
  return (
    <>
      <BackLink href="/campaigns" className="mb-2">
        Re-render campaigns
      </BackLink>
      <CampaignView
        key={id}
        id={id}
        canRun={can(user.role, "campaigns:run")}
        canReview={can(user.role, "review:decide")}
      />
    </>
  );
}
