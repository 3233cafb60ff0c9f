import type { Metadata } from "next";
import { Suspense } from "react";
import { AuditView } from "@/components/audit/audit-view";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";

export const metadata: Metadata = { title: "Audit" };

export default async function AuditPage() {
  const user = await requirePageAccess("audit:read");
  return (
    <>
      <PageHeader
        title="Audit"
        lead="Whether the record still holds: the provenance log's hash chain, the fixity of every stored file, and the history of each disc with its exports."
      />
      <Suspense fallback={<p className="text-sm text-ink-faint">Loading…</p>}>
        <AuditView
          canEditSettings={can(user.role, "settings:edit")}
          canRunFixity={can(user.role, "fixity:run")}
          canListPeople={can(user.role, "people:read")}
        />
      </Suspense>
    </>
  );
}
