import type { Metadata } from "next";
import { Suspense } from "react";
import { SignInForm } from "@/components/auth/sign-in-form";
import { env } from "@/lib/env";

export const metadata: Metadata = { title: "Sign in" };
export const dynamic = "force-dynamic";

export default function SignInPage() {
  return (
    <div className="space-y-8">
      <div className="space-y-2">
        <p className="text-sm font-medium uppercase tracking-wider text-shellac">{env().LAB_NAME}</p>
        <h1 className="text-3xl font-semibold">Sign in to the lab</h1>
      </div>
      <Suspense>
        <SignInForm />
      </Suspense>
    </div>
  );
}
