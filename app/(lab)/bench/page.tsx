import type { Metadata } from "next";
import { QueueTable } from "@/components/catalogue/queue-table";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Transfer bench" };

export default async function BenchPage() {
  await requirePageAccess("bench:use");
  return (
    <>
      <PageHeader
        title="Transfer bench"
        lead="Open a side to choose its curve, upload the flat transfer, listen through the candidates and render the access copy."
      />
      <QueueTable />
    </>
  );
}
