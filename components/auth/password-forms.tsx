"use client";
import { useActionState } from "react";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import type { ActionState } from "@/lib/http/action";

type Action = (prev: ActionState, form: FormData) => Promise<ActionState>;

/** Name (for invitations) and a new password twice; posts to the given server action. */
export function NewPasswordForm({
  action,
  token,
  askName,
  submitLabel,
}: {
  action: Action;
  token: string;
  askName?: boolean;
  submitLabel: string;
}) {
  const [state, formAction, pending] = useActionState(action, null);
  const f = state?.fields ?? {};
  return (
    <form action={formAction} className="space-y-5" noValidate data-testid="new-password-form">
      {state && !state.ok ? (
        <Notice tone="error" title="Not saved">
          {state.message}
        </Notice>
      ) : null}
      <input type="hidden" name="token" value={token} />
      {askName ? (
        <TextField
          id="name"
          label="Your name"
          autoComplete="name"
          errors={f.name}
          defaultValue={state?.values?.name}
          required
        />
      ) : null}
      <TextField
        id="password"
        type="password"
        label="Password"
        autoComplete="new-password"
        hint="At least 12 characters. A few unrelated words make a strong one."
        errors={f.password}
        required
      />
      <TextField
        id="confirm"
        type="password"
        label="The same password again"
        autoComplete="new-password"
        errors={f.confirm}
        required
      />
      {f.token ? <Notice tone="error">{f.token.join(" ")}</Notice> : null}
      <Button type="submit" className="w-full" disabled={pending}>
        {pending ? "Saving…" : submitLabel}
      </Button>
    </form>
  );
}

export function ResetRequestForm({ action }: { action: Action }) {
  const [state, formAction, pending] = useActionState(action, null);
  return (
    <form action={formAction} className="space-y-5" noValidate data-testid="reset-request-form">
      {state?.ok ? (
        <Notice tone="success" title="Check your mail">
          {state.message}
        </Notice>
      ) : null}
      {state && !state.ok && !state.fields ? <Notice tone="error">{state.message}</Notice> : null}
      <TextField
        id="email"
        type="email"
        label="E-mail"
        autoComplete="username"
        errors={state?.fields?.email}
        defaultValue={state?.values?.email}
        required
      />
      <Button type="submit" className="w-full" disabled={pending}>
        {pending ? "Sending…" : "Send me a link"}
      </Button>
    </form>
  );
}
