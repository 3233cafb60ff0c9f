import type { ReactNode } from "react";
import { cx } from "./cx";

const tones = {
  neutral: "bg-paper-deep text-ink-soft",
  accent: "bg-shellac-wash text-shellac-deep",
  groove: "bg-groove-wash text-groove",
  ok: "bg-moss-wash text-moss",
  alarm: "bg-alarm-wash text-alarm",
} as const;

export function Badge({
  tone = "neutral",
  children,
  testId,
}: {
  tone?: keyof typeof tones;
  children: ReactNode;
  testId?: string;
}) {
  return (
    <span
      className={cx("inline-flex items-center rounded px-2 py-0.5 text-xs font-medium", tones[tone])}
      data-testid={testId}
    >
      {children}
    </span>
  );
}
