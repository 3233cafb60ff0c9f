import Link from "next/link";
import { NavIcon } from "@/components/shell/nav-icon";
import { Notice } from "@/components/ui/notice";
import { PageHeader } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";
import { roleLabels } from "@/lib/auth/roles";
import { navItems } from "@/lib/navigation";

const roleDays = {
  admin: "You invite people, set their roles and keep the lab's settings.",
  archivist: "You receive accessions, log each disc and side, import spreadsheets and assign work.",
  engineer: "You choose each side's playback curve, upload the flat transfer and render the access copy.",
  curator: "You review and approve sides, audit their provenance and run fixity checks.",
} as const;

export default async function OverviewPage() {
  const user = await requirePageAccess("lab:enter");
  const places = navItems.filter((i) => i.href !== "/" && can(user.role, i.action));
  return (
    <>
      <PageHeader
        title={`Good to see you, ${user.name.split(" ")[0]}`}
        lead={`${roleLabels[user.role]}. ${roleDays[user.role]}`}
      />
      <ul className="grid gap-4 sm:grid-cols-2 xl:grid-cols-3" data-testid="overview-places">
        {places.map((p) => (
          <li key={p.href}>
            <Link
              href={p.href}
              className="group flex h-full gap-4 rounded-xl border border-paper-edge bg-white/80 p-5 shadow-sm transition hover:border-shellac/60 hover:shadow"
            >
              <span className="flex h-10 w-10 shrink-0 items-center justify-center rounded-lg bg-shellac-wash text-shellac-deep">
                <NavIcon icon={p.icon} />
              </span>
              <span>
                <span className="block font-display text-lg font-semibold group-hover:text-shellac-deep">
                  {p.label}
                </span>
                <span className="block text-sm text-ink-soft">{p.blurb}</span>
              </span>
            </Link>
          </li>
        ))}
      </ul>
      <Notice tone="caution" title="At the bench" className="mt-8 max-w-3xl">
        Broken shellac and glass-based lacquers have sharp edges; deteriorating lacquers shed residue, so wear
        gloves; some cleaning fluids destroy some disc materials. A curve with large bass gain can be very
        loud in headphones: start playback low. Your institution&apos;s conservation and safety rules come
        first.
      </Notice>
    </>
  );
}
