import type { Metadata } from "next";
import { CampaignList } from "@/components/campaigns/campaign-list";
import { Panel, PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Re-render campaigns" };

export default async function CampaignsPage() {
  await requirePageAccess("curves:read");
  return (
    <>
      <PageHeader
        title="Re-render campaigns"
        back={{ href: "/curves", label: "Curve library" }}
        lead={
          "When a preset version turns out wrong and a later version corrects it, a campaign re-chooses the " +
          "curve of the sides that rest on it and renders them again. Start one from a preset's uses."
        }
      />
      <Panel>
        <CampaignList />
      </Panel>
    </>
  );
}
