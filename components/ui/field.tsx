import type { InputHTMLAttributes, ReactNode, SelectHTMLAttributes } from "react";
import { cx } from "./cx";

/** The control look (input, select, textarea); also for controls wired straight to react-hook-form. */
export function controlClass(invalid: boolean, extra?: string): string {
  return cx(
    "block w-full rounded-md border bg-white px-3 py-2 text-sm text-ink placeholder:text-ink-faint shadow-inner shadow-paper-deep/60 focus:border-shellac",
    invalid ? "border-alarm" : "border-paper-edge",
    extra,
  );
}

interface FieldShellProps {
  id: string;
  label: string;
  hint?: ReactNode;
  errors?: string[];
  children: ReactNode;
}

/** Label, control, hint and the errors for that field, wired for screen readers. */
export function FieldShell({ id, label, hint, errors, children }: FieldShellProps) {
  return (
    <div className="space-y-1.5">
      <label htmlFor={id} className="block text-sm font-medium text-ink">
        {label}
      </label>
      {children}
      {hint && !errors?.length ? (
        <p id={`${id}-hint`} className="text-xs text-ink-faint">
          {hint}
        </p>
      ) : null}
      {errors?.length ? (
        <p
          id={`${id}-error`}
          role="alert"
          className="text-xs font-medium text-alarm"
          data-testid={`error-${id}`}
        >
          {errors.join(" ")}
        </p>
      ) : null}
    </div>
  );
}

export function TextField({
  id,
  label,
  hint,
  errors,
  className,
  ...props
}: InputHTMLAttributes<HTMLInputElement> & {
  id: string;
  label: string;
  hint?: ReactNode;
  errors?: string[];
}) {
  return (
    <FieldShell id={id} label={label} hint={hint} errors={errors}>
      <input
        id={id}
        name={props.name ?? id}
        aria-invalid={errors?.length ? true : undefined}
        aria-describedby={errors?.length ? `${id}-error` : hint ? `${id}-hint` : undefined}
        className={controlClass(!!errors?.length, className)}
        {...props}
      />
    </FieldShell>
  );
}

export function SelectField({
  id,
  label,
  hint,
  errors,
  children,
  className,
  ...props
}: SelectHTMLAttributes<HTMLSelectElement> & {
  id: string;
  label: string;
  hint?: ReactNode;
  errors?: string[];
}) {
  return (
    <FieldShell id={id} label={label} hint={hint} errors={errors}>
      <select
        id={id}
        name={props.name ?? id}
        aria-invalid={errors?.length ? true : undefined}
        className={controlClass(!!errors?.length, className)}
        {...props}
      >
        {children}
      </select>
    </FieldShell>
  );
}
