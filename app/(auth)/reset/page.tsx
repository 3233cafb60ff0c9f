import type { Metadata } from "next";
import Link from "next/link";
import { ResetRequestForm } from "@/components/auth/password-forms";
import { requestResetAction } from "../actions";

export const metadata: Metadata = { title: "Reset password" };

export default function ResetRequestPage() {
  return (
    <div className="space-y-8">
      <div className="space-y-2">
        <h1 className="text-3xl font-semibold">Forgotten password</h1>
        <p className="text-ink-soft">
          Enter the address you sign in with. We will send a link to choose a new password.
        </p>
      </div>
      <ResetRequestForm action={requestResetAction} />
      <Link href="/sign-in" className="text-sm underline underline-offset-4">
        Back to sign-in
      </Link>
    </div>
  );
}
