"use client";
import Link from "next/link";
import { usePathname } from "next/navigation";
import { signOut } from "next-auth/react";
import type { NavItem } from "@/lib/navigation";
import { cx } from "@/components/ui/cx";
import { GrooveMark } from "./groove-mark";
import { NavIcon } from "./nav-icon";

export function Sidebar({
  items,
  user,
  labName,
}: {
  items: NavItem[];
  user: { name: string; email: string; roleLabel: string };
  labName: string;
}) {
  const pathname = usePathname();
  const isActive = (href: string) =>
    href === "/" ? pathname === "/" : pathname === href || pathname.startsWith(`${href}/`);
  return (
    <nav aria-label="Lab" className="flex h-full flex-col bg-lacquer text-lacquer-text" data-testid="lab-nav">
      <div className="flex items-center gap-3 px-5 pb-5 pt-6">
        <GrooveMark size={30} />
        <div>
          <p className="font-display text-lg font-semibold leading-none text-white">Rillbook</p>
          <p className="mt-1 text-xs text-lacquer-text/70">{labName}</p>
        </div>
      </div>
      <ul className="flex-1 space-y-0.5 px-3">
        {items.map((item) => (
          <li key={item.href}>
            <Link
              href={item.href}
              aria-current={isActive(item.href) ? "page" : undefined}
              className={cx(
                "group flex items-center gap-3 rounded-md px-3 py-2 text-sm transition-colors",
                isActive(item.href)
                  ? "bg-lacquer-raised text-white shadow-[inset_3px_0_0_#e39a4f]"
                  : "text-lacquer-text/85 hover:bg-lacquer-raised/60 hover:text-white",
              )}
            >
              <span
                className={cx(
                  isActive(item.href)
                    ? "text-shellac-glow"
                    : "text-lacquer-text/60 group-hover:text-lacquer-text",
                )}
              >
                <NavIcon icon={item.icon} />
              </span>
              {item.label}
            </Link>
          </li>
        ))}
      </ul>
      <div className="m-3 rounded-lg border border-lacquer-line bg-lacquer-raised/50 p-3">
        <p className="truncate text-sm font-medium text-white" data-testid="current-user">
          {user.name}
        </p>
        <p className="truncate text-xs text-lacquer-text/70">{user.email}</p>
        <div className="mt-2 flex items-center justify-between">
          <span
            className="rounded bg-shellac/25 px-2 py-0.5 text-xs font-medium text-shellac-glow"
            data-testid="current-role"
          >
            {user.roleLabel}
          </span>
          <button
            type="button"
            onClick={() => void signOut({ callbackUrl: "/sign-in" })}
            className="rounded px-2 py-1 text-xs text-lacquer-text/80 hover:bg-lacquer-line hover:text-white"
          >
            Sign out
          </button>
        </div>
      </div>
    </nav>
  );
}
