import type { Metadata } from "next";
import { RecallView } from "@/components/equipment/recall-view";
import { loadOr404 } from "@/components/equipment/load";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { itemName } from "@/lib/equipment/describe";
import { getItem } from "@/lib/equipment/register";
import { equipmentKindLabels } from "@/lib/validation/equipment";

export const metadata: Metadata = { title: "Recall" };

export default async function RecallPage({ params }: { params: Promise<{ id: string }> }) {
  await requirePageAccess("equipment:read");
  const { item } = await loadOr404((await params).id, getItem);
  return (
    <>
      <PageHeader
        back={{ href: `/equipment/items/${item.id}`, label: itemName(item) }}
        title={`Transfers made with ${itemName(item)}`}
        lead={`${equipmentKindLabels[item.kind]}${item.serial ? `, serial ${item.serial}` : ""}: every flat transfer it was used for, by day. Narrow the days, then download the list for re-transfer.`}
      />
      <RecallView itemId={item.id} />
    </>
  );
}
