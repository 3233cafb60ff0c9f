import type { Metadata } from "next";
import Link from "next/link";
import { NewPasswordForm } from "@/components/auth/password-forms";
import { Notice } from "@/components/ui/notice";
import { roleLabels } from "@/lib/auth/roles";
import { env } from "@/lib/env";
import { invitationProblems, lookUpInvitation } from "@/lib/people/invitations";
import { acceptInvitationAction } from "../../actions";

export const metadata: Metadata = { title: "Join the lab" };
export const dynamic = "force-dynamic";

export default async function InvitationPage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const inv = await lookUpInvitation(token);
  if (inv.state !== "open") {
    return (
      <div className="space-y-6">
        <h1 className="text-3xl font-semibold">Invitation</h1>
        <Notice tone="error" title="This link cannot be used">
          {invitationProblems[inv.state]}
        </Notice>
        <Link href="/sign-in" className="text-sm underline underline-offset-4">
          Go to sign-in
        </Link>
      </div>
    );
  }
  return (
    <div className="space-y-8">
      <div className="space-y-2">
        <p className="text-sm font-medium uppercase tracking-wider text-shellac">{env().LAB_NAME}</p>
        <h1 className="text-3xl font-semibold">Join the lab</h1>
        <p className="text-ink-soft">
          You are invited as <strong>{roleLabels[inv.role].toLowerCase()}</strong> with the address{" "}
          <strong>{inv.email}</strong>. Choose the name your colleagues will see and a password.
        </p>
      </div>
      <NewPasswordForm
        action={acceptInvitationAction}
        token={token}
        askName
        submitLabel="Create my account"
      />
    </div>
  );
}
