import { PlannedPlace } from "@/components/shell/planned-place";
import { requirePageAccess } from "@/lib/auth/page";

export default async function Page() {
  await requirePageAccess("review:decide");
  return <PlannedPlace title="Review" />;
}
