import { redirect } from "next/navigation";
import type { ReactNode } from "react";
import { DatabaseUnavailable } from "@/components/shell/database-unavailable";
import { Sidebar } from "@/components/shell/sidebar";
import { Providers } from "@/components/shell/providers";
import { can } from "@/lib/auth/permissions";
import { roleLabels } from "@/lib/auth/roles";
import { currentUser } from "@/lib/auth/session";
import { env } from "@/lib/env";
import { isDatabaseUnavailable } from "@/lib/http/errors";
import { navItems } from "@/lib/navigation";

export const dynamic = "force-dynamic";

export default async function LabLayout({ children }: { children: ReactNode }) {
  // Every lab page starts by reading who is signed in: with the database away, the page
  // says so plainly instead of failing (app/error.tsx covers a failure further in).
  let user: Awaited<ReturnType<typeof currentUser>>;
  try {
    user = await currentUser();
  } catch (err) {
    if (!isDatabaseUnavailable(err)) throw err;
    console.error("[rillbook] the database is unavailable:", err instanceof Error ? err.message : err);
    return <DatabaseUnavailable />;
  }
  if (!user) redirect("/sign-in");
  const items = navItems.filter((i) => can(user.role, i.action));
  return (
    <Providers>
      <a
        href="#main"
        className="sr-only focus:not-sr-only focus:fixed focus:left-4 focus:top-4 focus:z-50 focus:rounded focus:bg-white focus:px-3 focus:py-2"
      >
        Skip to content
      </a>
      <div className="grid min-h-screen md:grid-cols-[15.5rem_minmax(0,1fr)]">
        <div className="bg-lacquer">
          <div className="md:sticky md:top-0 md:h-screen">
            <Sidebar
              items={items}
              user={{ name: user.name, email: user.email, roleLabel: roleLabels[user.role] }}
              labName={env().LAB_NAME}
            />
          </div>
        </div>
        <main id="main" className="mx-auto w-full max-w-[90rem] px-6 py-8 lg:px-10">
          {children}
        </main>
      </div>
    </Providers>
  );
}
