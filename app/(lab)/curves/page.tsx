import type { Metadata } from "next";
import Link from "next/link";
import { PresetTable } from "@/components/curves/preset-table";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Curves" };

export default async function CurvesPage() {
  await requirePageAccess("curves:read");
  return (
    <>
      <PageHeader
        title="Curve library"
        lead="The lab's playback curves, each at its current version. Open one in the workbench to see its response, compare it, or save a new version with a note saying why."
        actions={
          <Link
            href="/curves/workbench"
            className="inline-flex h-10 items-center justify-center rounded-md bg-shellac px-4 text-sm font-medium text-white shadow-sm transition-colors hover:bg-shellac-deep"
            data-testid="new-curve"
          >
            New curve
          </Link>
        }
      />
      <PresetTable />
    </>
  );
}
