"use client";
// The pages' error boundary. A page that failed because the lab's database is away (a
// restart, an outage) says so plainly: the server hides an error's text from the browser
// in production, so this asks /api/health, which names each service's state.
import { useEffect, useState } from "react";
import { DatabaseUnavailable } from "@/components/shell/database-unavailable";
import { GrooveMark } from "@/components/shell/groove-mark";

type Cause = "checking" | "database" | "other";

export default function ErrorPage({ reset }: { error: Error & { digest?: string }; reset: () => void }) {
  const [cause, setCause] = useState<Cause>("checking");
  useEffect(() => {
    let live = true;
    fetch("/api/health", { cache: "no-store" })
      .then(async (res) => ((await res.json()) as { database?: string }).database)
      .then((database) => live && setCause(database === "ok" ? "other" : "database"))
      .catch(() => live && setCause("other"));
    return () => {
      live = false;
    };
  }, []);
  const retry = (
    <button
      type="button"
      onClick={() => {
        reset();
        window.location.reload();
      }}
      className="inline-block rounded-md bg-shellac px-4 py-2 text-sm font-medium text-white hover:bg-shellac-deep"
      data-testid="error-retry"
    >
      Try again
    </button>
  );
  if (cause === "database") return <DatabaseUnavailable retry={retry} />;
  return (
    <main
      className="flex min-h-screen items-center justify-center px-6"
      data-testid="page-error"
      data-cause={cause}
    >
      <div className="max-w-md space-y-4 text-center">
        <GrooveMark size={44} className="mx-auto" />
        <h1 className="text-3xl font-semibold">
          {cause === "checking" ? "This page could not be shown" : "Something went wrong"}
        </h1>
        <p className="text-ink-soft">
          The server could not show this page. The error has been logged; try again, and tell the lab&apos;s
          admin if it keeps happening.
        </p>
        {retry}
      </div>
    </main>
  );
}
