"use client";
import { when } from "@/components/catalogue/format";
import { CORNER_WORDS, formatNumber } from "@/components/curves/plot-format";
import { Badge } from "@/components/ui/badge";
import { CORNER_NAMES, type CurveSpec } from "@/lib/curves";
import { evidenceLabels } from "@/lib/validation/transfers";
import { describeCorner } from "./curve-choice-form";
import type { CurveChoiceJson } from "./types";

function changed(overrides: Partial<CurveSpec>): string[] {
  const out: string[] = [];
  for (const n of CORNER_NAMES) {
    if (!(n in overrides)) continue;
    const v = overrides[n];
    out.push(v ? `${CORNER_WORDS[n]} ${describeCorner(v)}` : `no ${CORNER_WORDS[n]}`);
  }
  if (overrides.reference) out.push(`${overrides.reference.db} dB at ${overrides.reference.hz} Hz`);
  return out;
}

/** "RIAA v3", or "Own values" for a choice without a preset. */
export function curveTitle(c: CurveChoiceJson): string {
  return c.presetName ? `${c.presetName} v${c.presetVersion}` : "Own values";
}

/** Every curve recorded for the side, newest first: the first is the one a render uses. */
export function ChoiceHistory({ choices, loading }: { choices: CurveChoiceJson[] | undefined; loading: boolean }) {
  if (loading) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (!choices?.length) return <p className="text-sm text-ink-faint" data-testid="choice-history-empty">No curve recorded for this side yet.</p>;
  return (
    <ol className="space-y-3" data-testid="choice-history">
      {choices.map((c, i) => {
        const edits = changed(c.overrides ?? {});
        return (
          <li key={c.id} className={i === 0 ? "rounded-lg border border-groove/40 bg-groove-wash/40 p-3" : "rounded-lg border border-paper-edge p-3"}>
            <div className="flex flex-wrap items-center gap-2">
              {i === 0 ? <Badge tone="groove">Current</Badge> : null}
              <span className="font-semibold">{curveTitle(c)}</span>
              {c.cutSpeedRpm !== c.transferSpeedRpm ? (
                <span className="font-mono text-xs text-ink-soft">
                  {formatNumber(c.transferSpeedRpm)}/{formatNumber(c.cutSpeedRpm)} rpm
                </span>
              ) : (
                <span className="font-mono text-xs text-ink-soft">{formatNumber(c.cutSpeedRpm)} rpm</span>
              )}
            </div>
            {edits.length ? <p className="mt-1 font-mono text-xs text-ink-soft">Changed: {edits.join("; ")}</p> : null}
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
