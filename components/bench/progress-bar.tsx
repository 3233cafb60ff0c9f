import { cx } from "@/components/ui/cx";

/** A labelled progress bar: the fraction in words beside the bar, for screen readers and at a glance. */
export function ProgressBar({
  value,
  label,
  detail,
  tone = "groove",
  testId,
}: {
  value: number;
  label: string;
  detail?: string;
  tone?: "groove" | "shellac" | "alarm";
  testId?: string;
}) {
  const pct = Math.max(0, Math.min(100, Math.round(value * 100)));
  return (
    <div className="space-y-1" data-testid={testId}>
      <div className="flex items-baseline justify-between gap-3 text-xs">
        <span className="font-medium text-ink-soft">{label}</span>
        <span className="font-mono text-ink" data-testid={testId ? `${testId}-percent` : undefined}>
          {pct} %{detail ? <span className="text-ink-faint"> · {detail}</span> : null}
        </span>
      </div>
      <div
        role="progressbar"
        aria-label={label}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={pct}
        className="h-2.5 overflow-hidden rounded-full bg-paper-deep"
      >
        <div
          className={cx(
            "h-full rounded-full transition-[width] duration-200",
            tone === "groove" ? "bg-groove" : tone === "shellac" ? "bg-shellac" : "bg-alarm",
          )}
          style={{ width: `${pct}%` }}
        />
      </div>
    </div>
  );
}

export function formatBytes(bytes: number): string {
  if (!Number.isFinite(bytes)) return "—";
  const units = ["bytes", "KiB", "MiB", "GiB", "TiB"];
  let v = bytes;
  let u = 0;
  while (v >= 1024 && u < units.length - 1) {
    v /= 1024;
    u++;
  }
  return u === 0 ? `${v} bytes` : `${v.toFixed(v >= 100 ? 0 : 1)} ${units[u]}`;
}

export function formatDuration(seconds: number): string {
  if (!Number.isFinite(seconds)) return "—";
  const m = Math.floor(seconds / 60);
  const s = seconds - m * 60;
  return `${m}:${s.toFixed(1).padStart(4, "0")}`;
}
