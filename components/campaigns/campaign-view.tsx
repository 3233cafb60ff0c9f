"use client";
/**
 * One re-render campaign as it runs: progress (polled every 2 s until it finishes), the
 * failures with their reasons and a retry for each or for all, a cancel that stops what
 * has not started, and every side with where it stands.
 */
import Link from "next/link";
import { when } from "@/components/catalogue/format";
import { StatusBadge } from "@/components/catalogue/status-badge";
import { Badge } from "@/components/ui/badge";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { Notice } from "@/components/ui/notice";
import { Panel } from "@/components/ui/panel";
import { useCampaign, useCampaignAction } from "@/hooks/use-campaigns";
import { CampaignBar, campaignStateBadge } from "./campaign-list";
import type { CampaignSideJson } from "./types";

const sideStateTone = { waiting: "groove", done: "ok", failed: "alarm", cancelled: "neutral" } as const;

function Count({
  label,
  value,
  tone,
  testId,
}: {
  label: string;
  value: number;
  tone: string;
  testId: string;
}) {
  return (
    <div className="rounded-lg border border-paper-edge bg-white px-4 py-3">
      <p className="text-xs font-medium uppercase tracking-wide text-ink-faint">{label}</p>
      <p className={cx("text-3xl font-semibold tabular-nums", tone)} data-testid={testId}>
        {value}
      </p>
    </div>
  );
}

function sideState(s: CampaignSideJson): string {
  if (s.state !== "waiting") return s.state;
  if (s.renderStatus === "running") return `rendering ${Math.round((s.renderProgress ?? 0) * 100)} %`;
  return "queued";
}

export function CampaignView({ id, canRun, canReview }: { id: string; canRun: boolean; canReview: boolean }) {
  const q = useCampaign(id);
  const act = useCampaignAction(id);
  if (q.isLoading) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (q.error || !q.data) return <Notice tone="error">{q.error?.message ?? "Could not load."}</Notice>;
  const { campaign: c, sides } = q.data;
  const failed = sides.filter((s) => s.state === "failed");
  const settled = c.done + c.failed + c.cancelled;
  const running = c.state === "running";
  const canCancel = canRun && running && !c.cancelledAt;
  const canRetry = canRun && !c.cancelledAt && failed.length > 0;

  return (
    <div className="space-y-6" data-testid="campaign-view" data-state={c.state}>
      <header className="space-y-3 border-b border-paper-edge pb-5">
        <div className="flex flex-wrap items-center gap-3">
          <h1 className="text-3xl font-semibold tracking-tight" data-testid="campaign-title">
            {c.title}
          </h1>
          <span data-testid="campaign-state">{campaignStateBadge(c)}</span>
        </div>
        <p className="max-w-3xl text-ink-soft">{c.rationale}</p>
        <p className="text-sm text-ink-faint">
          <Link
            href={`/curves/presets/${c.presetId}/uses`}
            className="text-shellac-deep underline-offset-2 hover:underline"
          >
            {c.presetName}
          </Link>{" "}
          version {c.correctingVersion} · started by {c.startedBy}{" "}
          <time dateTime={c.startedAt}>{when(c.startedAt)}</time>
          {c.finishedAt ? (
            <>
              {" "}
              · finished <time dateTime={c.finishedAt}>{when(c.finishedAt)}</time>
            </>
          ) : null}
          {c.cancelledAt ? (
            <>
              {" "}
              · cancelled <time dateTime={c.cancelledAt}>{when(c.cancelledAt)}</time>
            </>
          ) : null}
        </p>
      </header>

      <Panel
        title="Progress"
        actions={
          canCancel ? (
            <Button
              variant="danger"
              size="sm"
              disabled={act.isPending}
              onClick={() => act.mutate({ action: "cancel" })}
              data-testid="cancel-campaign"
            >
              Cancel what has not started
            </Button>
          ) : null
        }
      >
        <div className="space-y-4">
          <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
            <Count label="Done" value={c.done} tone="text-moss" testId="count-done" />
            <Count
              label="Failed"
              value={c.failed}
              tone={c.failed ? "text-alarm" : "text-ink"}
              testId="count-failed"
            />
            <Count label="Waiting" value={c.waiting} tone="text-groove" testId="count-waiting" />
            <Count label="Cancelled" value={c.cancelled} tone="text-ink-soft" testId="count-cancelled" />
          </div>
          <div className="space-y-1">
            <CampaignBar c={c} />
            <p className="text-xs text-ink-soft" data-testid="campaign-progress">
              {settled} of {c.total} side{c.total === 1 ? "" : "s"} settled
              {c.rendering ? ` · ${c.rendering} rendering now` : ""}
              {running ? " · this page updates by itself" : ""}
            </p>
          </div>
          {c.cancelledAt && running ? (
            <Notice tone="info">
              Cancelled: renders that had not started were cancelled; the ones already under way finish, and
              their sides complete as usual.
            </Notice>
          ) : null}
          {act.error ? <Notice tone="error">{act.error.message}</Notice> : null}
        </div>
      </Panel>

      {failed.length ? (
        <Panel
          title={`Failures (${failed.length})`}
          actions={
            canRetry ? (
              <Button
                size="sm"
                disabled={act.isPending}
                onClick={() => act.mutate({ action: "retry" })}
                data-testid="retry-all"
              >
                Retry all failed
              </Button>
            ) : null
          }
        >
          <ul className="divide-y divide-paper-edge" data-testid="failure-list">
            {failed.map((s) => (
              <li key={s.sideId} className="flex flex-wrap items-start justify-between gap-3 py-3">
                <div className="min-w-0 space-y-0.5">
                  <Link
                    href={`/catalogue/${s.discId}`}
                    className="font-medium text-shellac-deep underline-offset-2 hover:underline"
                  >
                    {s.shelfMark} · {s.designation}
                  </Link>
                  <p className="text-sm text-alarm" data-testid="failure-reason">
                    {s.error}
                  </p>
                </div>
                {canRetry ? (
                  <Button
                    variant="secondary"
                    size="sm"
                    disabled={act.isPending}
                    onClick={() => act.mutate({ action: "retry", sideIds: [s.sideId] })}
                    data-testid="retry-side"
                  >
                    Retry
                  </Button>
                ) : null}
              </li>
            ))}
          </ul>
        </Panel>
      ) : null}

      <Panel title={`Sides (${sides.length})`}>
        <div className="overflow-x-auto">
          <table
            className="w-full text-left text-sm"
            aria-label="Sides of the campaign"
            data-testid="campaign-sides"
          >
            <thead className="text-xs uppercase tracking-wide text-ink-soft">
              <tr>
                <th className="px-3 py-2 font-semibold">Side</th>
                <th className="px-3 py-2 font-semibold">Was</th>
                <th className="px-3 py-2 font-semibold">Now</th>
                <th className="px-3 py-2 font-semibold">In the campaign</th>
                <th className="px-3 py-2 font-semibold">What became of it</th>
              </tr>
            </thead>
            <tbody>
              {sides.map((s, i) => (
                <tr
                  key={s.sideId}
                  className={cx("border-t border-paper-edge/70", i % 2 === 1 && "bg-paper/40")}
                  data-testid="campaign-side"
                  data-state={s.state}
                >
                  <td className="px-3 py-2.5">
                    <Link
                      // A side waiting for review opens in the review for a curator; otherwise its disc.
                      href={
                        canReview && s.status === "in_review"
                          ? `/review/${s.sideId}`
                          : `/catalogue/${s.discId}`
                      }
                      className="font-medium text-shellac-deep underline-offset-2 hover:underline"
                    >
                      {s.shelfMark} · {s.designation}
                    </Link>
                    <p className="line-clamp-1 text-xs text-ink-faint">{s.title}</p>
                  </td>
                  <td className="px-3 py-2.5">
                    <span className="mr-1 font-mono text-xs text-ink-faint">v{s.fromVersion}</span>
                    <StatusBadge status={s.statusBefore} />
                  </td>
                  <td className="px-3 py-2.5">
                    <StatusBadge status={s.status} />
                  </td>
                  <td className="px-3 py-2.5">
                    <Badge tone={sideStateTone[s.state]}>{sideState(s)}</Badge>
                    {s.attempts > 1 ? (
                      <span className="ml-2 text-xs text-ink-faint">{s.attempts} tries</span>
                    ) : null}
                  </td>
                  <td className="max-w-md px-3 py-2.5 text-xs text-ink-soft">
                    {s.state === "failed" ? (
                      <span className="text-alarm">{s.error}</span>
                    ) : (
                      (s.outcome ?? "—")
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </Panel>
    </div>
  );
}
