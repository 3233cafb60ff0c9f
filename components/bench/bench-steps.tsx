import { cx } from "@/components/ui/cx";
import type { SideStatusName } from "@/lib/validation/catalogue";

export interface BenchStep {
  /** The section it jumps to. */
  id: string;
  label: string;
  done: boolean;
  /** What stands there now, in a few words ("flat.wav", "RIAA v1"). */
  detail?: string | null;
}

/**
 * The bench's steps, kept at the top of the window while the page scrolls: each jumps to
 * its section and shows whether it is done; the next one is marked, and the sentence beside
 * them says what to do next (or why there is nothing to do).
 */
export function BenchSteps({
  steps,
  next,
}: {
  steps: BenchStep[];
  next: { text: string; id: string | null };
}) {
  return (
    <nav
      aria-label="Steps at the bench"
      className={cx(
        "sticky top-0 z-10 -mx-1 flex flex-wrap items-center gap-x-4 gap-y-1 rounded-lg border border-paper-edge",
        "bg-paper/95 px-2 py-1.5 text-sm shadow-sm backdrop-blur",
      )}
      data-testid="bench-steps"
    >
      <ol className="flex flex-wrap gap-1">
        {steps.map((s, i) => {
          const isNext = next.id === s.id && !s.done;
          return (
            <li key={s.id}>
              <a
                href={`#${s.id}`}
                aria-current={isNext ? "step" : undefined}
                title={s.detail ?? undefined}
                className={cx(
                  "inline-flex items-center gap-1.5 rounded px-2 py-1 hover:bg-white hover:text-ink",
                  isNext ? "bg-white font-medium text-ink ring-1 ring-shellac/40" : "text-ink-soft",
                )}
                data-testid={`bench-step-${s.id}`}
                data-done={s.done ? "yes" : "no"}
              >
                <span
                  aria-hidden
                  className={cx(
                    "flex h-5 w-5 shrink-0 items-center justify-center rounded-full text-[11px] font-semibold",
                    s.done
                      ? "bg-moss text-white"
                      : isNext
                        ? "bg-shellac text-white"
                        : "bg-paper-deep text-ink-soft",
                  )}
                >
                  {s.done ? "✓" : i + 1}
                </span>
                {s.label}
                {s.detail ? (
                  <span className="hidden max-w-48 truncate font-mono text-xs text-ink-faint 2xl:inline">
                    {s.detail}
                  </span>
                ) : null}
                <span className="sr-only">{s.done ? " (done)" : isNext ? " (next)" : ""}</span>
              </a>
            </li>
          );
        })}
      </ol>
      <p className="ml-auto px-2 text-xs text-ink-soft" data-testid="bench-next" aria-live="polite">
        {next.id ? (
          <a
            href={`#${next.id}`}
            className="underline decoration-shellac/50 underline-offset-2 hover:text-ink"
          >
            {next.text}
          </a>
        ) : (
          next.text
        )}
      </p>
    </nav>
  );
}

/** What the engineer does next on this side, and the section where it is done. */
export function nextAtBench(a: {
  status: SideStatusName;
  mine: boolean;
  assignee: string | null;
  hasTransfer: boolean;
  hasCurve: boolean;
  hasAccessCopy: boolean;
}): { text: string; id: string | null } {
  if (a.status === "approved") return { text: "Approved: nothing is left to do on this side.", id: null };
  if (a.status === "in_review")
    return { text: "A curator is reviewing this side: it comes back here only if it is returned.", id: null };
  if (!a.mine)
    return { text: `Assigned to ${a.assignee ?? "nobody yet"}: you can look and listen.`, id: null };
  const back = a.status === "returned" ? "Returned: " : "";
  if (!a.hasTransfer) return { text: `${back}Next, upload the flat transfer.`, id: "bench-transfer" };
  if (!a.hasCurve) return { text: `${back}Next, listen and record the curve.`, id: "bench-listen" };
  if (!a.hasAccessCopy) return { text: `${back}Next, render the access copy.`, id: "bench-access" };
  return { text: `${back}Next, hear the access copy and send it for review.`, id: "bench-access" };
}
