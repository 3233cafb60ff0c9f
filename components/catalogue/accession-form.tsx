"use client";
import { zodResolver } from "@hookform/resolvers/zod";
import { useMutation, useQueryClient } from "@tanstack/react-query";
import { type KeyboardEvent, useId } from "react";
import { type Resolver, useForm } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { controlClass, FieldShell } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { fetchJson } from "@/lib/http/client";
import type { AppError } from "@/lib/http/errors";
import { accessionSchema } from "@/lib/validation/catalogue";
import { isoDateInputProps } from "./format";
import type { AccessionJson } from "./types";

interface Values {
  identifier: string;
  source: string;
  receivedOn: string;
  notes: string;
}

const today = () => new Date().toISOString().slice(0, 10);

/**
 * Records a new accession, or corrects one (`editing`). It is a group inside whatever
 * form holds it (HTML forms do not nest), so Enter in its fields saves the accession,
 * not the form around it.
 */
export function AccessionForm({
  onCreated,
  onCancel,
  editing,
  testId = "accession-form",
}: {
  onCreated?: (a: AccessionJson) => void;
  onCancel?: () => void;
  /** The accession to correct; without it the form records a new one. */
  editing?: AccessionJson;
  testId?: string;
}) {
  const uid = useId();
  const queryClient = useQueryClient();
  const blank = { identifier: "", source: "", receivedOn: today(), notes: "" };
  const form = useForm<Values>({
    resolver: zodResolver(accessionSchema) as unknown as Resolver<Values>,
    defaultValues: editing
      ? {
          identifier: editing.identifier,
          source: editing.source,
          receivedOn: editing.receivedOn,
          notes: editing.notes,
        }
      : blank,
  });
  const { errors } = form.formState;
  const create = useMutation<{ accession: AccessionJson }, AppError, Values>({
    mutationFn: (v) =>
      editing
        ? fetchJson(`/api/accessions/${editing.id}`, { method: "PATCH", body: JSON.stringify(v) })
        : fetchJson("/api/accessions", { method: "POST", body: JSON.stringify(v) }),
    onSuccess: ({ accession }) => {
      void queryClient.invalidateQueries({ queryKey: ["accessions"] });
      void queryClient.invalidateQueries({ queryKey: ["discs"] });
      if (!editing) form.reset(blank);
      onCreated?.(accession);
    },
    onError: (e) => {
      for (const [k, msgs] of Object.entries(e.fields ?? {})) {
        if (k in form.getValues())
          form.setError(k as keyof Values, { type: "server", message: msgs.join(" ") });
      }
    },
  });
  const submit = form.handleSubmit((v) => create.mutate(v));
  const enterSaves = (e: KeyboardEvent) => {
    if (e.key === "Enter" && !(e.target instanceof HTMLTextAreaElement)) {
      e.preventDefault();
      void submit();
    }
  };
  const field = (name: keyof Values, label: string, props: Record<string, unknown> = {}) => {
    const id = `${uid}-${name}`;
    const err = errors[name]?.message;
    return (
      <FieldShell id={id} label={label} errors={err ? [err] : undefined}>
        <input
          id={id}
          aria-invalid={err ? true : undefined}
          aria-describedby={err ? `${id}-error` : undefined}
          className={controlClass(!!err)}
          {...form.register(name)}
          {...props}
          data-testid={`${testId}-${name}`}
        />
      </FieldShell>
    );
  };

  return (
    <div
      role="group"
      aria-label={editing ? `Correct accession ${editing.identifier}` : "New accession"}
      className="space-y-3"
      onKeyDown={enterSaves}
      data-testid={testId}
    >
      {create.error && !Object.keys(create.error.fields ?? {}).some((k) => k in form.getValues()) ? (
        <Notice tone="error">{create.error.message}</Notice>
      ) : null}
      <div className="grid gap-3 sm:grid-cols-2">
        {field("identifier", "Accession identifier", {
          placeholder: "e.g. MH-2026-003",
          autoComplete: "off",
        })}
        {field("receivedOn", "Received on (YYYY-MM-DD)", isoDateInputProps)}
      </div>
      {field("source", "Source", { placeholder: "Donor, transfer or purchase" })}
      <FieldShell id={`${uid}-notes`} label="Notes">
        <textarea id={`${uid}-notes`} rows={2} className={controlClass(false)} {...form.register("notes")} />
      </FieldShell>
      <div className="flex gap-2">
        <Button
          type="button"
          size="sm"
          onClick={() => void submit()}
          disabled={create.isPending}
          data-testid={`${testId}-save`}
        >
          {create.isPending ? "Saving…" : editing ? "Save correction" : "Save accession"}
        </Button>
        {onCancel ? (
          <Button type="button" size="sm" variant="quiet" onClick={onCancel}>
            Cancel
          </Button>
        ) : null}
      </div>
    </div>
  );
}
