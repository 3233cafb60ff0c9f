"use client";
import { useQueryClient } from "@tanstack/react-query";
import { useActionState, useEffect, useRef } from "react";
import { inviteAction } from "@/app/(lab)/people/actions";
import { Button } from "@/components/ui/button";
import { SelectField, TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { roleLabels, roles } from "@/lib/auth/roles";

export function InviteForm() {
  const [state, formAction, pending] = useActionState(inviteAction, null);
  const queryClient = useQueryClient();
  const formRef = useRef<HTMLFormElement>(null);
  useEffect(() => {
    if (state?.ok) {
      formRef.current?.reset();
      void queryClient.invalidateQueries({ queryKey: ["people"] });
      void queryClient.invalidateQueries({ queryKey: ["people-changes"] });
    }
  }, [state, queryClient]);
  return (
    <form ref={formRef} action={formAction} className="space-y-4" noValidate data-testid="invite-form">
      {state?.ok ? <Notice tone="success">{state.message}</Notice> : null}
      {state && !state.ok && !state.fields ? <Notice tone="error">{state.message}</Notice> : null}
      <TextField
        id="invite-email"
        name="email"
        type="email"
        label="E-mail"
        errors={state?.fields?.email}
        defaultValue={state?.values?.email}
        required
      />
      <SelectField
        id="invite-role"
        name="role"
        label="Role"
        defaultValue={state?.values?.role || "archivist"}
        errors={state?.fields?.role}
      >
        {roles.map((r) => (
          <option key={r} value={r}>
            {roleLabels[r]}
          </option>
        ))}
      </SelectField>
      <p className="text-xs text-ink-faint">
        They receive a link that works once and expires after 72 hours.
      </p>
      <Button type="submit" disabled={pending} className="w-full">
        {pending ? "Sending…" : "Send invitation"}
      </Button>
    </form>
  );
}
