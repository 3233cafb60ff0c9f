import type { Metadata } from "next";
import { PresetTable } from "@/components/curves/preset-table";
import { LinkButton } from "@/components/ui/link-button";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Curves" };

export default async function CurvesPage() {
  await requirePageAccess("curves:read");
  return (
    <>
      <PageHeader
        title="Curve library"
        lead={
          "The lab's playback curves, each at its current version. Open one in the workbench " +
          "to see its response, compare it, or save a new version with a note saying why."
        }
        actions={
          <>
            <LinkButton href="/campaigns" data-testid="campaigns-link">
              Re-render campaigns
            </LinkButton>
            <LinkButton href="/curves/workbench" variant="primary" data-testid="new-curve">
              New curve
            </LinkButton>
          </>
        }
      />
      <PresetTable />
    </>
  );
}
