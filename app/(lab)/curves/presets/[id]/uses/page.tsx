import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { PresetUses } from "@/components/campaigns/preset-uses";
import { LinkButton } from "@/components/ui/link-button";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";
import { getPreset } from "@/lib/presets";

export const metadata: Metadata = { title: "Where a preset is used" };

const UUID = /^[0-9a-f-]{36}$/i;

export default async function PresetUsesPage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requirePageAccess("curves:read");
  const { id } = await params;
  if (!UUID.test(id)) notFound();
  const preset = await getPreset(id).catch(() => null);
  if (!preset) notFound();
  return (
    <>
      <PageHeader
        title={`Where ${preset.name} is used`}
        back={{ href: "/curves", label: "Curve library" }}
        lead={
          "The sides whose current curve choice rests on each version of this preset, and where each stands. " +
          "When a later version corrects an earlier one, select the sides to re-render from the correction."
        }
        actions={
          <LinkButton
            href={`/curves/workbench?preset=${encodeURIComponent(id)}`}
            data-testid="open-workbench"
          >
            Open in the workbench
          </LinkButton>
        }
      />
      <PresetUses presetId={id} canRun={can(user.role, "campaigns:run")} />
    </>
  );
}
