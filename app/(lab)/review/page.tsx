import type { Metadata } from "next";
import { Suspense } from "react";
import { ReviewQueue } from "@/components/review/review-queue";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Review" };

export default async function ReviewPage() {
  await requirePageAccess("review:decide");
  return (
    <>
      <PageHeader
        title="Review"
        lead={
          "Sides whose engineer has sent them for review. Open one to check the curve, the " +
          "files and their fixity, listen, then approve it or send it back with a reason."
        }
      />
      <Suspense fallback={<p className="text-sm text-ink-faint">Loading…</p>}>
        <ReviewQueue />
      </Suspense>
    </>
  );
}
