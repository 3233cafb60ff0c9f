import type { Metadata } from "next";
import { BenchView } from "@/components/bench/bench-view";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Transfer bench" };

const UUID = /^[0-9a-f-]{36}$/i;

export default async function BenchSidePage({
  params,
  searchParams,
}: {
  params: Promise<{ sideId: string }>;
  searchParams: Promise<{ sides?: string }>;
}) {
  const user = await requirePageAccess("bench:use");
  const { sideId } = await params;
  // ?sides=id,id: sides picked in the catalogue that one curve choice may cover together.
  const extra = ((await searchParams).sides ?? "")
    .split(",")
    .map((s) => s.trim())
    .filter((s) => UUID.test(s) && s !== sideId);
  return <BenchView key={sideId} sideId={sideId} userId={user.id} extraSideIds={extra} />;
}
