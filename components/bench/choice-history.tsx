"use client";
import { when } from "@/components/catalogue/format";
import { formatNumber } from "@/components/curves/plot-format";
import { Badge } from "@/components/ui/badge";
import { Panel } from "@/components/ui/panel";
import { curveChoiceName } from "@/lib/curves";
import { evidenceLabels } from "@/lib/validation/transfers";
import type { CurveChoiceJson } from "./types";

/** The panel of every curve recorded for the side, newest first: the first is the one a render uses. */
export function ChoiceHistory({
  choices,
  loading,
}: {
  choices: CurveChoiceJson[] | undefined;
  loading: boolean;
}) {
  return (
    <Panel title="Curves recorded for this side">
      <ChoiceList choices={choices} loading={loading} />
    </Panel>
  );
}

function ChoiceList({ choices, loading }: { choices: CurveChoiceJson[] | undefined; loading: boolean }) {
  if (loading) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (!choices?.length)
    return (
      <p className="text-sm text-ink-faint" data-testid="choice-history-empty">
        No curve recorded for this side yet.
      </p>
    );
  return (
    <ol className="space-y-3" data-testid="choice-history">
      {choices.map((c, i) => {
        return (
          <li
            key={c.id}
            className={
              i === 0
                ? "rounded-lg border border-groove/40 bg-groove-wash/40 p-3"
                : "rounded-lg border border-paper-edge p-3"
            }
          >
            <div className="flex flex-wrap items-center gap-2">
              {i === 0 ? <Badge tone="groove">Current</Badge> : null}
              <span className="font-semibold" data-testid="choice-name">
                {curveChoiceName(c)}
              </span>
              {c.cutSpeedRpm !== c.transferSpeedRpm ? (
                <span className="font-mono text-xs text-ink-soft">
                  {formatNumber(c.transferSpeedRpm)}/{formatNumber(c.cutSpeedRpm)} rpm
                  {c.correctSpeed ? " · speed corrected in the render" : ""}
                </span>
              ) : (
                <span className="font-mono text-xs text-ink-soft">{formatNumber(c.cutSpeedRpm)} rpm</span>
              )}
            </div>
            <p className="mt-1.5 text-sm">{c.rationale}</p>
            <p className="mt-1 text-xs text-ink-faint">
              {evidenceLabels[c.evidenceKind] ?? c.evidenceKind}
              {c.evidence ? ` — ${c.evidence}` : ""}
            </p>
            <p className="mt-1 text-xs text-ink-faint">
              {c.chosenBy} · {when(c.chosenAt)}
            </p>
          </li>
        );
      })}
    </ol>
  );
}
