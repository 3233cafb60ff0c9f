import type { Metadata } from "next";
import { InviteForm } from "@/components/people/invite-form";
import { PeopleChanges } from "@/components/people/people-changes";
import { PeopleTable } from "@/components/people/people-table";
import { PageHeader, Panel } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "People" };

export default async function PeoplePage() {
  const user = await requirePageAccess("people:read");
  return (
    <>
      <PageHeader
        title="People"
        lead="Who works in the lab, in which role. Changes take effect at the person's next request and are recorded."
      />
      <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="space-y-6">
          <PeopleTable currentUserId={user.id} />
          <PeopleChanges />
        </div>
        <Panel title="Invite someone" className="self-start">
          <InviteForm />
        </Panel>
      </div>
    </>
  );
}
