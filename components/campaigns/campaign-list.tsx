"use client";
/** The lab's re-render campaigns (or one preset's), newest first, with their progress. */
import Link from "next/link";
import { when } from "@/components/catalogue/format";
import { Badge } from "@/components/ui/badge";
import { useCampaigns } from "@/hooks/use-campaigns";
import type { CampaignSummaryJson } from "./types";

export function campaignStateBadge(c: Pick<CampaignSummaryJson, "state" | "cancelledAt" | "failed">) {
  if (c.state === "running") return <Badge tone="groove">{c.cancelledAt ? "cancelling" : "running"}</Badge>;
  if (c.cancelledAt) return <Badge tone="neutral">cancelled</Badge>;
  return c.failed ? <Badge tone="alarm">finished with failures</Badge> : <Badge tone="ok">finished</Badge>;
}

/** A thin bar of the sides' states: done, failed, cancelled, waiting. */
export function CampaignBar({
  c,
}: {
  c: Pick<CampaignSummaryJson, "total" | "done" | "failed" | "cancelled">;
}) {
  const pct = (n: number) => (c.total ? `${(100 * n) / c.total}%` : "0%");
  return (
    <div className="flex h-2 w-full overflow-hidden rounded-full bg-paper-deep" aria-hidden>
      <div className="bg-moss" style={{ width: pct(c.done) }} />
      <div className="bg-alarm" style={{ width: pct(c.failed) }} />
      <div className="bg-ink-faint" style={{ width: pct(c.cancelled) }} />
    </div>
  );
}

export function CampaignList({ presetId }: { presetId?: string }) {
  const { data, isLoading, error } = useCampaigns(presetId);
  if (isLoading) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (error) return <p className="text-sm text-alarm">{error.message}</p>;
  if (!data?.campaigns.length)
    return (
      <p className="text-sm text-ink-faint" data-testid="campaign-list-empty">
        No re-render campaign yet.
        {presetId
          ? ""
          : " A campaign starts from a preset's uses, once a later version corrects an earlier one."}
      </p>
    );
  return (
    <ul className="divide-y divide-paper-edge" data-testid="campaign-list">
      {data.campaigns.map((c) => (
        <li key={c.id} className="grid gap-2 py-3 sm:grid-cols-[1fr_19rem] sm:items-center">
          <div className="min-w-0 space-y-0.5">
            <div className="flex flex-wrap items-center gap-2">
              <Link
                href={`/campaigns/${c.id}`}
                className="font-medium text-shellac-deep underline-offset-2 hover:underline"
                data-testid="campaign-link"
              >
                {c.title}
              </Link>
              {campaignStateBadge(c)}
            </div>
            <p className="text-xs text-ink-faint">
              {c.presetName} v{c.correctingVersion} · started by {c.startedBy}{" "}
              <time dateTime={c.startedAt}>{when(c.startedAt)}</time>
            </p>
          </div>
          <div className="space-y-1">
            <CampaignBar c={c} />
            <p className="text-xs tabular-nums text-ink-soft">
              {c.done} done · {c.failed} failed · {c.waiting} waiting · {c.cancelled} cancelled
            </p>
          </div>
        </li>
      ))}
    </ul>
  );
}
