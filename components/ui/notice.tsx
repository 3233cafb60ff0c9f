import type { ReactNode } from "react";
import { cx } from "./cx";

const tones = {
  info: "border-groove/30 bg-groove-wash text-ink",
  caution: "border-shellac/40 bg-shellac-wash text-ink",
  error: "border-alarm/40 bg-alarm-wash text-ink",
  success: "border-moss/40 bg-moss-wash text-ink",
} as const;

const marks = { info: "i", caution: "!", error: "×", success: "✓" } as const;

export function Notice({
  tone = "info",
  title,
  children,
  className,
  testId,
}: {
  tone?: keyof typeof tones;
  title?: string;
  children?: ReactNode;
  className?: string;
  testId?: string;
}) {
  return (
    <div
      role={tone === "error" ? "alert" : "status"}
      data-testid={testId}
      className={cx("flex gap-3 rounded-lg border px-4 py-3 text-sm", tones[tone], className)}
    >
      <span
        aria-hidden
        className="mt-0.5 flex h-5 w-5 shrink-0 items-center justify-center rounded-full bg-white/70 font-mono text-xs font-bold"
      >
        {marks[tone]}
      </span>
      <div className="space-y-1">
        {title ? <p className="font-semibold">{title}</p> : null}
        {children ? <div className="text-ink-soft">{children}</div> : null}
      </div>
    </div>
  );
}
