"use client";
/** The figures of the edited curve over its plot: peak gain, the ends of the band, the time constants. */
import { useMemo } from "react";
import { cx } from "@/components/ui/cx";
import { analogGainDb, analogModel, type CurveDescription } from "@/lib/curves";
import { CORNER_WORDS, formatDb, formatHz, formatNumber } from "./plot-format";

export function SummaryStrip({ desc, stale }: { desc: CurveDescription | null; stale: boolean }) {
  const gains = useMemo(() => {
    if (!desc) return null;
    const model = analogModel(desc.curve.spec);
    return { at20: analogGainDb(model, 20), at20k: analogGainDb(model, 20_000) };
  }, [desc]);
  if (!desc || !gains) return null;
  const c = desc.curve;
  const taus = (["shelf", "turnover", "rolloff", "highpass", "ultrasonic"] as const).flatMap((n) =>
    c[n] ? [{ n, tau: c[n].filterTauUs }] : [],
  );
  return (
    <dl
      className={cx(
        "grid grid-cols-2 gap-px overflow-hidden rounded-xl border border-paper-edge bg-paper-edge text-sm md:grid-cols-4",
        stale && "opacity-60",
      )}
      data-testid="curve-summary"
    >
      <div className="bg-white px-4 py-2.5">
        <dt className="text-xs text-ink-soft">Peak gain</dt>
        <dd className="font-mono text-lg font-semibold" data-testid="summary-peak">
          {formatDb(desc.peakGainDb, 2)}
        </dd>
        <dd className="text-xs text-ink-faint">at {formatHz(desc.peakHz)}</dd>
      </div>
      <div className="bg-white px-4 py-2.5">
        <dt className="text-xs text-ink-soft">Gain at 20 Hz</dt>
        <dd className="font-mono text-lg font-semibold">{formatDb(gains.at20, 2)}</dd>
      </div>
      <div className="bg-white px-4 py-2.5">
        <dt className="text-xs text-ink-soft">Gain at 20 kHz</dt>
        <dd className="font-mono text-lg font-semibold">{formatDb(gains.at20k, 2)}</dd>
      </div>
      <div className="bg-white px-4 py-2.5">
        <dt className="text-xs text-ink-soft">
          Time constants{c.speedRatio !== 1 ? ` at ×${c.speedRatio.toFixed(3)}` : ""}
        </dt>
        <dd className="space-y-0.5 pt-0.5 font-mono text-xs" data-testid="summary-taus">
          {taus.length ? (
            taus.map((t) => (
              <span key={t.n} className="mr-2 inline-block whitespace-nowrap">
                <span className="font-sans text-ink-faint">{CORNER_WORDS[t.n]}</span> {formatNumber(t.tau, 4)}{" "}
                µs
              </span>
            ))
          ) : (
            <span className="font-sans text-ink-faint">none: flat</span>
          )}
        </dd>
      </div>
    </dl>
  );
}
