import type { ReactNode } from "react";
import { cx } from "./cx";
import { BackLink } from "./link-button";

export function Panel({
  title,
  actions,
  children,
  className,
}: {
  title?: string;
  actions?: ReactNode;
  children: ReactNode;
  className?: string;
}) {
  return (
    <section className={cx("rounded-xl border border-paper-edge bg-white/80 shadow-sm", className)}>
      {title ? (
        <header className="flex items-center justify-between gap-4 border-b border-paper-edge px-5 py-3">
          <h2 className="font-sans text-sm font-semibold uppercase tracking-wide text-ink-soft">{title}</h2>
          {actions}
        </header>
      ) : null}
      <div className="p-5">{children}</div>
    </section>
  );
}

/** A page's title and lead; `back` puts the way back to the page above it over the title. */
export function PageHeader({
  title,
  lead,
  actions,
  back,
}: {
  title: string;
  lead?: ReactNode;
  actions?: ReactNode;
  back?: { href: string; label: ReactNode };
}) {
  return (
    <>
      {back ? (
        <BackLink href={back.href} className="mb-2">
          {back.label}
        </BackLink>
      ) : null}
      <header className="mb-6 flex flex-wrap items-end justify-between gap-4 border-b border-paper-edge pb-5">
        <div className="max-w-3xl space-y-1">
          <h1 className="text-3xl font-semibold tracking-tight">{title}</h1>
          {lead ? <p className="text-ink-soft">{lead}</p> : null}
        </div>
        {actions ? <div className="flex gap-2">{actions}</div> : null}
      </header>
    </>
  );
}
