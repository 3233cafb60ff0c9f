import { cx } from "@/components/ui/cx";

/** The design system's control look, for inputs wired straight to react-hook-form. */
export function controlClass(invalid: boolean, extra?: string): string {
  return cx(
    "block w-full rounded-md border bg-white px-3 py-2 text-sm text-ink placeholder:text-ink-faint shadow-inner shadow-paper-deep/60 focus:border-shellac",
    invalid ? "border-alarm" : "border-paper-edge",
    extra,
  );
}
