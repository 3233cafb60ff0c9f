import type { ReactNode } from "react";
import { GrooveMark } from "./groove-mark";

/** What a page shows when the lab's database cannot be reached (a restart, an outage). */
export function DatabaseUnavailable({ retry }: { retry?: ReactNode }) {
  return (
    <main className="flex min-h-screen items-center justify-center px-6" data-testid="database-unavailable">
      <div className="max-w-md space-y-4 text-center">
        <GrooveMark size={44} className="mx-auto" />
        <h1 className="text-3xl font-semibold">The lab&apos;s database is unavailable</h1>
        <p className="text-ink-soft">
          Rillbook cannot reach its database just now (it may be restarting). Nothing you did was half-saved:
          what was not confirmed was not recorded. Try again in a minute; if it lasts, tell the lab&apos;s
          admin.
        </p>
        {retry}
      </div>
    </main>
  );
}
