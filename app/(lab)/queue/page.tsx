import type { Metadata } from "next";
import { QueueTable } from "@/components/catalogue/queue-table";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "My queue" };

export default async function QueuePage() {
  await requirePageAccess("bench:use");
  return (
    <>
      <PageHeader
        title="My queue"
        lead="The sides assigned to you that still need work. Returned sides come first, with the reviewer's reason."
      />
      <QueueTable />
    </>
  );
}
