import Link from "next/link";
import { GrooveMark } from "@/components/shell/groove-mark";

export default function Forbidden() {
  return (
    <main className="flex min-h-screen items-center justify-center px-6" data-testid="forbidden">
      <div className="max-w-md space-y-4 text-center">
        <GrooveMark size={44} className="mx-auto" />
        <h1 className="text-3xl font-semibold">Not part of your role</h1>
        <p className="text-ink-soft">
          This page belongs to another role in the lab. If you need it for your work, ask the lab&apos;s admin
          to change your role.
        </p>
        <Link
          href="/"
          className="inline-block rounded-md bg-shellac px-4 py-2 text-sm font-medium text-white hover:bg-shellac-deep"
        >
          Back to the overview
        </Link>
      </div>
    </main>
  );
}
