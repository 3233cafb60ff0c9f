import Link from "next/link";
import type { ComponentProps, ReactNode } from "react";
import { type ButtonSize, type ButtonVariant, buttonClass } from "./button";
import { cx } from "./cx";

/** A link that looks like the design system's button (navigation stays a link for keyboard and screen readers). */
export function LinkButton({
  variant = "secondary",
  size = "md",
  className,
  ...props
}: ComponentProps<typeof Link> & { variant?: ButtonVariant; size?: ButtonSize }) {
  return <Link className={buttonClass({ variant, size, className })} {...props} />;
}

/** "← Catalogue": the way back to the page this one sits under. */
export function BackLink({
  href,
  children,
  className,
}: {
  href: string;
  children: ReactNode;
  className?: string;
}) {
  return (
    <p className={cx("text-sm", className)}>
      <Link href={href} className="text-ink-soft underline-offset-2 hover:text-ink hover:underline">
        ← {children}
      </Link>
    </p>
  );
}
