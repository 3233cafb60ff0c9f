"use client";
import Link from "next/link";
import { useRouter, useSearchParams } from "next/navigation";
import { signIn } from "next-auth/react";
import { useState } from "react";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { safeNextPath } from "@/lib/http/next-path";

export function SignInForm() {
  const router = useRouter();
  const params = useSearchParams();
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const next = params.get("next");
  const target = safeNextPath(next);

  async function onSubmit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    setBusy(true);
    setError(null);
    const form = new FormData(e.currentTarget);
    const res = await signIn("credentials", {
      email: form.get("email"),
      password: form.get("password"),
      redirect: false,
    });
    setBusy(false);
    if (!res || res.error) {
      setError(
        res?.error && res.error !== "CredentialsSignin"
          ? res.error
          : "That e-mail and password do not match an account.",
      );
      return;
    }
    router.replace(target);
    router.refresh();
  }

  return (
    <form onSubmit={(e) => void onSubmit(e)} className="space-y-5" noValidate data-testid="sign-in-form">
      {error ? (
        <Notice tone="error" title="Not signed in" testId="sign-in-error">
          {error}
        </Notice>
      ) : null}
      {params.get("reset") === "done" ? (
        <Notice tone="success" title="Password changed">
          Sign in with your new password.
        </Notice>
      ) : null}
      {params.get("welcome") ? (
        <Notice tone="success" title="Your account is ready">
          Sign in with the password you just chose.
        </Notice>
      ) : null}
      <TextField
        id="email"
        name="email"
        type="email"
        label="E-mail"
        autoComplete="username"
        required
        autoFocus
      />
      <TextField
        id="password"
        name="password"
        type="password"
        label="Password"
        autoComplete="current-password"
        required
      />
      <Button type="submit" className="w-full" disabled={busy}>
        {busy ? "Checking…" : "Sign in"}
      </Button>
      <p className="text-center text-sm text-ink-soft">
        <Link href="/reset" className="underline decoration-shellac/50 underline-offset-4 hover:text-ink">
          Forgotten your password?
        </Link>
      </p>
    </form>
  );
}
