import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { ReviewView } from "@/components/review/review-view";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Review a side" };

const UUID = /^[0-9a-f-]{36}$/i;

export default async function ReviewSidePage({ params }: { params: Promise<{ sideId: string }> }) {
  await requirePageAccess("review:decide");
  const { sideId } = await params;
  if (!UUID.test(sideId)) notFound();
  return <ReviewView key={sideId} sideId={sideId} />;
}
