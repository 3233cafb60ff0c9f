import type { ButtonHTMLAttributes } from "react";
import { cx } from "./cx";

const variants = {
  primary: "bg-shellac text-white hover:bg-shellac-deep shadow-sm",
  secondary: "bg-white text-ink border border-paper-edge hover:border-ink-faint",
  quiet: "text-ink-soft hover:text-ink hover:bg-paper-deep",
  danger: "bg-white text-alarm border border-alarm/40 hover:bg-alarm-wash",
} as const;

export type ButtonVariant = keyof typeof variants;
export type ButtonSize = "sm" | "md";

/** The button look, for anything that must look like a button but is not one (links, downloads). */
export function buttonClass({
  variant = "primary",
  size = "md",
  className,
}: { variant?: ButtonVariant; size?: ButtonSize; className?: string } = {}): string {
  return cx(
    "inline-flex items-center justify-center gap-2 rounded-md font-medium transition-colors disabled:cursor-not-allowed disabled:opacity-50",
    size === "sm" ? "h-8 px-3 text-sm" : "h-10 px-4 text-sm",
    variants[variant],
    className,
  );
}

export function Button({
  variant = "primary",
  size = "md",
  className,
  ...props
}: ButtonHTMLAttributes<HTMLButtonElement> & { variant?: ButtonVariant; size?: ButtonSize }) {
  return <button className={buttonClass({ variant, size, className })} {...props} />;
}
