import type { Metadata } from "next";
import Link from "next/link";
import { NewPasswordForm } from "@/components/auth/password-forms";
import { Notice } from "@/components/ui/notice";
import { lookUpReset, resetProblems } from "@/lib/people/password-resets";
import { resetPasswordAction } from "../../actions";

export const metadata: Metadata = { title: "Choose a new password" };
export const dynamic = "force-dynamic";

export default async function ResetPage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const state = await lookUpReset(token);
  return (
    <div className="space-y-8">
      <h1 className="text-3xl font-semibold">Choose a new password</h1>
      {state === "open" ? (
        <NewPasswordForm action={resetPasswordAction} token={token} submitLabel="Save the new password" />
      ) : (
        <>
          <Notice tone="error" title="This link cannot be used">
            {resetProblems[state]}
          </Notice>
          <Link href="/reset" className="text-sm underline underline-offset-4">
            Ask for a new link
          </Link>
        </>
      )}
    </div>
  );
}
