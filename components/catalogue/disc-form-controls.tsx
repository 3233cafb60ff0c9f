"use client";
import type { ReactNode } from "react";
import type { FieldErrors, FieldPath, UseFormRegister } from "react-hook-form";
import { controlClass, FieldShell } from "@/components/ui/field";
import type { DiscFormValues } from "./disc-form-values";

/** The disc form's labelled controls, with their errors beside them, bound to one form. */
export function discControls(register: UseFormRegister<DiscFormValues>, errors: FieldErrors<DiscFormValues>) {
  const err = (name: FieldPath<DiscFormValues>): string[] | undefined => {
    const parts = name.split(".");
    let node: unknown = errors;
    for (const p of parts) node = (node as Record<string, unknown> | undefined)?.[p];
    const m = (node as { message?: string } | undefined)?.message;
    return m ? [m] : undefined;
  };

  const input = (
    name: FieldPath<DiscFormValues>,
    label: string,
    props: Record<string, unknown> = {},
    hint?: ReactNode,
  ) => {
    const id = `disc-${name.replace(/\./g, "-")}`;
    const e = err(name);
    return (
      <FieldShell id={id} label={label} errors={e} hint={hint}>
        <input
          id={id}
          aria-invalid={e ? true : undefined}
          aria-describedby={e ? `${id}-error` : hint ? `${id}-hint` : undefined}
          className={controlClass(!!e)}
          {...register(name)}
          {...props}
        />
      </FieldShell>
    );
  };
  const select = (
    name: FieldPath<DiscFormValues>,
    label: string,
    options: [string, string][],
    props: Record<string, unknown> = {},
    hint?: ReactNode,
  ) => {
    const id = `disc-${name}`;
    const e = err(name);
    return (
      <FieldShell id={id} label={label} errors={e} hint={hint}>
        <select
          id={id}
          aria-invalid={e ? true : undefined}
          aria-describedby={e ? `${id}-error` : hint ? `${id}-hint` : undefined}
          className={controlClass(!!e)}
          {...register(name)}
          {...props}
        >
          {options.map(([v, l]) => (
            <option key={v} value={v}>
              {l}
            </option>
          ))}
        </select>
      </FieldShell>
    );
  };
  return { err, input, select };
}

export type DiscControls = ReturnType<typeof discControls>;
