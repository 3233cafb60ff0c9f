import type { Metadata } from "next";
import { ChainForm } from "@/components/equipment/chain-form";
import { PageHeader, Panel } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { listItems } from "@/lib/equipment/register";

export const metadata: Metadata = { title: "New chain" };

export default async function NewChainPage() {
  await requirePageAccess("equipment:edit");
  const today = new Date().toISOString().slice(0, 10);
  const items = (await listItems()).map((i) => ({
    ...i,
    retired: i.outOfServiceOn !== null && i.outOfServiceOn < today,
  }));
  return (
    <>
      <PageHeader
        back={{ href: "/equipment", label: "Equipment register" }}
        title="Save a chain"
        lead="A chain names the items a transfer is made with. An upload picks one, and may swap one item (usually the stylus) for that transfer."
      />
      <Panel>
        <ChainForm items={items} />
      </Panel>
    </>
  );
}
