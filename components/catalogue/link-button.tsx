import Link from "next/link";
import type { ComponentProps } from "react";
import { cx } from "@/components/ui/cx";

const variants = {
  primary: "bg-shellac text-white hover:bg-shellac-deep shadow-sm",
  secondary: "bg-white text-ink border border-paper-edge hover:border-ink-faint",
  quiet: "text-ink-soft hover:text-ink hover:bg-paper-deep",
} as const;

/** A link that looks like the design system's button (navigation stays a link for keyboard and screen readers). */
export function LinkButton({ variant = "secondary", size = "md", className, ...props }: ComponentProps<typeof Link> & { variant?: keyof typeof variants; size?: "sm" | "md" }) {
  return (
    <Link
      className={cx(
        "inline-flex items-center justify-center gap-2 rounded-md font-medium transition-colors",
        size === "sm" ? "h-8 px-3 text-sm" : "h-10 px-4 text-sm",
        variants[variant],
        className,
      )}
      {...props}
    />
  );
}

export const linkButtonClass = (variant: keyof typeof variants = "secondary") =>
  cx("inline-flex h-10 items-center justify-center gap-2 rounded-md px-4 text-sm font-medium transition-colors", variants[variant]);
