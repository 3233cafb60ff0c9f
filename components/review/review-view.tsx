"use client";
/**
 * One side under review, on one screen: the disc and side with their handling
 * cautions; the recorded curve with its rationale, evidence and the preset values
 * of the moment; the flat transfer and the access copy with checksums, technical
 * metadata and fixity; both to listen to (the access copy as rendered, and the flat
 * transfer through the chosen curve in this browser); the decision and its history.
 */
import { useQuery, useQueryClient } from "@tanstack/react-query";
import Link from "next/link";
import { useEffect, useMemo, useRef, useState } from "react";
import { AccessCopyCompare } from "@/components/bench/access-copy-compare";
import { AuditionPanel } from "@/components/bench/audition-panel";
import { reviewCandidates } from "@/components/bench/candidates";
import { ChoiceHistory } from "@/components/bench/choice-history";
import { statusLabel, when } from "@/components/catalogue/format";
import { SideHeader } from "@/components/catalogue/side-header";
import { Badge } from "@/components/ui/badge";
import { Notice } from "@/components/ui/notice";
import { LabelImages } from "@/components/labels/label-images";
import { Panel } from "@/components/ui/panel";
import { useChannelMode } from "@/hooks/use-channel-mode";
import { useSide } from "@/hooks/use-side";
import { useTimePassed } from "@/hooks/use-time-passed";
import { curveChoiceName } from "@/lib/curves";
import { fetchJson } from "@/lib/http/client";
import { CurveSummary } from "./curve-summary";
import { DecisionPanel } from "./decision-panel";
import { FixityCheckButton, fixityOf, RenderCard, TransferCard } from "./stored-files";
import type { FixityCheckJson, ReviewJson } from "./types";

/** How long to poll for the worker's fixity results before saying so. */
const FIXITY_WAIT_MS = 90_000;

export function ReviewView({ sideId }: { sideId: string }) {
  const queryClient = useQueryClient();
  const { side, choices, transfers, renders, now } = useSide(sideId);
  const reviews = useQuery({
    queryKey: ["side-reviews", sideId],
    queryFn: () => fetchJson<{ reviews: ReviewJson[] }>(`/api/sides/${sideId}/review`),
  });

  // Fixity: after "Check fixity now", poll until both files have a result newer than the request.
  const [fixityAsk, setFixityAsk] = useState<{ askedAt: number; startedAt: number } | null>(null);
  const [fixityError, setFixityError] = useState<string | null>(null);
  // What the side stands on (useSide reads it by the ids the server keeps), so the page shows exactly what an approval binds.
  const { choice: current, transfer, render } = now;
  const previous = choices.data?.choices.find((c) => c.id !== current?.id) ?? null;
  const watched = [transfer?.id, render?.id].filter(Boolean) as string[];
  const fixityWaited = useTimePassed(fixityAsk?.startedAt ?? null, FIXITY_WAIT_MS);
  const fixity = useQuery({
    queryKey: ["side-fixity", sideId],
    queryFn: () => fetchJson<{ checks: FixityCheckJson[] }>(`/api/sides/${sideId}/fixity`),
    refetchInterval: (q) => {
      if (!fixityAsk) return false;
      if (fixityWaited) return false;
      return arrived(q.state.data?.checks, watched, fixityAsk.askedAt) ? false : 1000;
    },
  });
  const fixityDone = !!fixityAsk && arrived(fixity.data?.checks, watched, fixityAsk.askedAt);
  const fixityTimedOut = !!fixityAsk && !fixityDone && fixityWaited;

  const checkFixity = async () => {
    const discId = side.data?.disc.id;
    if (!discId) return;
    setFixityError(null);
    try {
      const r = await fetchJson<{ queued: number; askedAt: number }>("/api/fixity", {
        method: "POST",
        body: JSON.stringify({ discId }),
      });
      setFixityAsk({ askedAt: r.askedAt, startedAt: Date.now() });
      await queryClient.invalidateQueries({ queryKey: ["side-fixity", sideId] });
    } catch (err) {
      setFixityError(err instanceof Error ? err.message : String(err));
    }
  };

  const [decided, setDecided] = useState<"approved" | "returned" | null>(null);
  const onDecided = (d: "approved" | "returned") => {
    setDecided(d);
    for (const key of [["side", sideId], ["side-reviews", sideId], ["reviews"]])
      void queryClient.invalidateQueries({ queryKey: key });
  };
  const decidedRef = useRef<HTMLDivElement | null>(null);
  useEffect(() => {
    if (decided) decidedRef.current?.focus();
  }, [decided]);

  // Listening: the flat transfer through the recorded curve (and the one before it, if the side came back).
  // Memoised: the page re-renders every second while it waits for fixity results.
  const candidates = useMemo(() => reviewCandidates(current, previous), [current, previous]);
  const { channelMode, setChannelMode, channelWhy } = useChannelMode({
    cut: side.data?.disc.cut,
    channels: transfer ? Number(transfer.channels) : undefined,
    rendered: render?.channelMode,
  });

  if (side.isLoading) return <p className="text-ink-faint">Loading the side…</p>;
  if (side.error || !side.data)
    return (
      <Notice tone="error" title="This side could not be opened">
        {side.error?.message ?? "Unknown side."}
      </Notice>
    );
  const { disc } = side.data;
  const s = side.data.side;
  const inReview = s.status === "in_review";

  const tFix = fixityOf(fixity.data?.checks, transfer?.id, transfer?.createdAt);
  const rFix = fixityOf(fixity.data?.checks, render?.id, render?.finishedAt);
  const fixityMissing = [
    tFix.state !== "passed" ? "the flat transfer" : null,
    rFix.state !== "passed" ? "the access copy" : null,
  ].filter(Boolean) as string[];
  // The database holds the current render to the current transfer and curve; say so if the page ever reads otherwise.
  const renderStale =
    render &&
    ((current && render.curveChoiceId && render.curveChoiceId !== current.id) ||
      (transfer && render.transferId && render.transferId !== transfer.id))
      ? "This access copy was not made from the side's current transfer and curve."
      : null;
  const fixityProgress = fixityError
    ? `The check was not queued: ${fixityError}`
    : !fixityAsk
      ? null
      : fixityDone
        ? `Checked: ${fixityMissing.length ? `${fixityMissing.join(" and ")} did not pass` : "both files read back with their recorded SHA-256"}.`
        : fixityTimedOut
          ? "No result from the worker yet: the check stays queued and runs when the worker is up."
          : "Queued: the worker is reading the files back…";

  return (
    <div className="space-y-6" data-testid="review-side">
      <SideHeader
        disc={disc}
        side={s}
        back={{ href: "/review", label: "Sides in review" }}
        testId="review-title"
        extraFacts={[
          { k: "Accession", v: disc.accessionIdentifier, mono: true },
          { k: "Engineer", v: s.assignedEngineerName ?? "—" },
        ]}
        showSideNotes
        aside={
          <Link
            href={`/audit?disc=${disc.id}`}
            className="text-xs text-shellac-deep underline underline-offset-2"
          >
            This disc&apos;s provenance
          </Link>
        }
      />

      <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_25rem]">
        <div className="min-w-0 space-y-6">
          <Panel title="The curve">
            {choices.isLoading ? (
              <p className="text-sm text-ink-faint">Loading…</p>
            ) : current ? (
              <CurveSummary current={current} compared={candidates} />
            ) : (
              <Notice tone="error">No curve is recorded for this side.</Notice>
            )}
          </Panel>

          <Panel title="The label">
            <LabelImages discId={disc.id} sides={[]} canAdd={false} onlySideId={sideId} />
          </Panel>

          <Panel title="Listen">
            <div className="space-y-6">
              <section className="space-y-2" aria-labelledby="review-access-listen">
                <h3 id="review-access-listen" className="font-sans text-sm font-semibold">
                  The access copy, as rendered on the server
                </h3>
                {render && transfer && current ? (
                  <div className="rounded-lg border border-paper-edge bg-paper/40 p-3">
                    <AccessCopyCompare
                      key={render.id}
                      render={render}
                      transfer={transfer}
                      spec={current.spec}
                      curveLabel={curveChoiceName(current)}
                    />
                  </div>
                ) : null}
                {render ? (
                  <>
                    <p className="text-xs text-ink-faint">The whole side, as stored:</p>
                    <audio
                      controls
                      preload="none"
                      src={`/api/renders/${render.id}/download`}
                      className="w-full"
                      data-testid="access-copy-player"
                      aria-label={`Access copy of ${disc.shelfMark} side ${s.designation}`}
                    >
                      <a href={`/api/renders/${render.id}/download`}>Download the access copy</a>
                    </audio>
                    <p className="text-xs text-ink-faint">
                      Start with your volume low: an equalized side can carry a lot of bass and surface noise.
                    </p>
                  </>
                ) : (
                  <p className="text-sm text-ink-faint">No finished access copy.</p>
                )}
              </section>
              <section
                className="space-y-2 border-t border-paper-edge pt-5"
                aria-labelledby="review-flat-listen"
              >
                <h3 id="review-flat-listen" className="font-sans text-sm font-semibold">
                  The flat transfer through the chosen curve, in this browser
                </h3>
                <p className="text-xs text-ink-faint">
                  Listening only: nothing here changes the side.
                  {previous ? " The curve before the last change is offered too, for comparison." : ""}
                </p>
                <AuditionPanel
                  transfer={transfer}
                  candidates={candidates}
                  channelMode={channelMode}
                  onChannelMode={setChannelMode}
                  channelWhy={channelWhy}
                />
              </section>
            </div>
          </Panel>

          <ChoiceHistory choices={choices.data?.choices} loading={choices.isLoading} />
        </div>

        <div className="min-w-0 space-y-6">
          <Panel title="Decision">
            <div ref={decidedRef} tabIndex={-1} className="space-y-3 outline-none">
              {decided ? (
                <Notice
                  tone={decided === "approved" ? "success" : "info"}
                  title={decided === "approved" ? "Approved" : "Returned to the engineer"}
                  testId="review-decided"
                >
                  {decided === "approved"
                    ? "The side is approved and the decision is in its provenance."
                    : "The engineer has been told why, by e-mail and on the bench."}{" "}
                  <Link href="/review" className="font-medium text-shellac-deep underline underline-offset-2">
                    Back to the sides in review
                  </Link>
                </Notice>
              ) : null}
              {inReview ? (
                <DecisionPanel sideId={sideId} fixityMissing={fixityMissing} onDecided={onDecided} />
              ) : !decided ? (
                <Notice tone="info" title={`This side is ${statusLabel(s.status).toLowerCase()}`}>
                  Only a side in review can be approved or returned.
                </Notice>
              ) : null}
            </div>
          </Panel>

          <Panel title="Files and fixity">
            <div className="space-y-3">
              {transfers.isLoading || renders.isLoading ? (
                <p className="text-sm text-ink-faint">Loading…</p>
              ) : null}
              {transfer ? (
                <TransferCard t={transfer} fixity={tFix} />
              ) : !transfers.isLoading ? (
                <p className="text-sm text-ink-faint">No flat transfer.</p>
              ) : null}
              {render ? (
                <RenderCard r={render} fixity={rFix} stale={renderStale} />
              ) : !renders.isLoading ? (
                <p className="text-sm text-ink-faint">No finished access copy.</p>
              ) : null}
              <FixityCheckButton
                onCheck={() => void checkFixity()}
                busy={!!fixityAsk && !fixityDone && !fixityTimedOut}
                progress={fixityProgress}
              />
            </div>
          </Panel>

          <Panel title="Review history">
            <ReviewHistory reviews={reviews.data?.reviews} loading={reviews.isLoading} />
          </Panel>
        </div>
      </div>
    </div>
  );
}

function arrived(checks: FixityCheckJson[] | undefined, ids: string[], askedAt: number): boolean {
  // A second of slack: the request's clock and the database's are the same machine's, but rounded differently.
  return (
    ids.length > 0 &&
    ids.every((id) =>
      (checks ?? []).some((c) => c.objectId === id && new Date(c.checkedAt).getTime() >= askedAt - 1000),
    )
  );
}

function ReviewHistory({ reviews, loading }: { reviews: ReviewJson[] | undefined; loading: boolean }) {
  if (loading) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (!reviews?.length)
    return (
      <p className="text-sm text-ink-faint" data-testid="review-history-empty">
        No decision on this side yet.
      </p>
    );
  return (
    <ol className="space-y-3" data-testid="review-history">
      {reviews.map((r) => (
        <li
          key={r.id}
          className="rounded-lg border border-paper-edge bg-white p-3"
          data-testid="review-history-item"
        >
          <div className="flex flex-wrap items-center gap-2">
            <Badge tone={r.decision === "approved" ? "ok" : "alarm"}>
              {r.decision === "approved" ? "Approved" : "Returned"}
            </Badge>
            <span className="text-sm">{r.curatorName}</span>
            <time dateTime={r.decidedAt} className="text-xs text-ink-faint">
              {when(r.decidedAt)}
            </time>
          </div>
          {r.reason ? <p className="mt-1.5 whitespace-pre-line text-sm text-ink-soft">{r.reason}</p> : null}
        </li>
      ))}
    </ol>
  );
}
