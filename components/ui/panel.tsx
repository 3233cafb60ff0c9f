import type { ReactNode } from "react";
import { cx } from "./cx";
import { BackLink } from "./link-button";

export function Panel({
  title,
  actions,
  children,
  className,
  id,
}: {
  title?: string;
  actions?: ReactNode;
  children: ReactNode;
  className?: string;
  /** An anchor a page's section links jump to. */
  id?: string;
}) {
  return (
    <section
      id={id}
      className={cx("scroll-mt-20 rounded-xl border border-paper-edge bg-white/80 shadow-sm", className)}
    >
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

/** Links to a long page's sections, kept at the top of the window while the page scrolls. */
export function SectionLinks({ sections }: { sections: { id: string; label: string }[] }) {
  return (
    <nav
      aria-label="Sections of this page"
      className="sticky top-0 z-10 -mx-1 flex flex-wrap gap-1 rounded-lg border border-paper-edge bg-paper/95 px-2 py-1.5 text-sm shadow-sm backdrop-blur"
      data-testid="section-links"
    >
      {sections.map((s) => (
        <a
          key={s.id}
          href={`#${s.id}`}
          className="rounded px-2.5 py-1 text-ink-soft hover:bg-white hover:text-ink"
        >
          {s.label}
        </a>
      ))}
    </nav>
  );
}
