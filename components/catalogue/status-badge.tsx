import { Badge } from "@/components/ui/badge";
import { statusLabel } from "./format";

const tones: Record<string, "neutral" | "accent" | "groove" | "ok" | "alarm"> = {
  catalogued: "neutral",
  assigned: "accent",
  curve_chosen: "groove",
  transferred: "groove",
  rendered: "groove",
  in_review: "accent",
  approved: "ok",
  returned: "alarm",
};

/** A side's place in the workflow, in words (colour only repeats what the words say). */
export function StatusBadge({ status }: { status: string }) {
  return <Badge tone={tones[status] ?? "neutral"}>{statusLabel(status)}</Badge>;
}
