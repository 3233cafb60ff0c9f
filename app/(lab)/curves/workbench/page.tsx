import type { Metadata } from "next";
import { Suspense } from "react";
import { Workbench } from "@/components/curves/workbench";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";

export const metadata: Metadata = { title: "Curve workbench" };

export default async function WorkbenchPage() {
  const user = await requirePageAccess("curves:read");
  return (
    <>
      <PageHeader
        title="Curve workbench"
        lead={
          "Shape a playback curve from its time constants, check the filter that will render " +
          "it, fit it to a published table or a test-disc transfer, and save it to the library."
        }
      />
      {/* The workbench reads ?preset= on the client. */}
      <Suspense fallback={<p className="text-sm text-ink-faint">Loading the workbench…</p>}>
        <Workbench canEdit={can(user.role, "curves:edit")} />
      </Suspense>
    </>
  );
}
