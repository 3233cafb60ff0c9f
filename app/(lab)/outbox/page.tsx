import type { Metadata } from "next";
import { OutboxTable } from "@/components/people/outbox-table";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Outbox" };

export default async function OutboxPage() {
  await requirePageAccess("outbox:read");
  return (
    <>
      <PageHeader
        title="Outbox"
        lead="Every message the lab sends is kept here first, then sent by the worker; a mail server that is down delays mail but loses none."
      />
      <OutboxTable />
    </>
  );
}
