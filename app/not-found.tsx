import Link from "next/link";

export default function NotFound() {
  return (
    <main className="flex min-h-screen items-center justify-center px-6">
      <div className="max-w-md space-y-4 text-center">
        <h1 className="text-3xl font-semibold">Nothing at this address</h1>
        <p className="text-ink-soft">The page may have moved, or the link is incomplete.</p>
        <Link
          href="/"
          className="inline-block rounded-md bg-shellac px-4 py-2 text-sm font-medium text-white"
        >
          Back to the overview
        </Link>
      </div>
    </main>
  );
}
