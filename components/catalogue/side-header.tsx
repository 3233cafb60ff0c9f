import Link from "next/link";
import type { ReactNode } from "react";
import { BackLink } from "@/components/ui/link-button";
import { Notice } from "@/components/ui/notice";
import { formatLabel, speedLabel } from "./format";
import { HandlingCautions } from "./handling-cautions";
import { StatusBadge } from "./status-badge";
import type { DiscJson, SideJson } from "./types";

function Fact({ k, v, mono }: { k: string; v: string; mono?: boolean }) {
  return (
    <div className="flex gap-1.5">
      <dt className="text-ink-faint">{k}</dt>
      <dd className={mono ? "font-mono" : undefined}>{v}</dd>
    </div>
  );
}

/**
 * The head of a page about one side (the bench, the review): where it sits, what it is,
 * its status, and the disc's handling cautions and logged notes before anything else.
 */
export function SideHeader({
  disc,
  side,
  back,
  testId,
  extraFacts = [],
  aside,
  showSideNotes,
}: {
  disc: DiscJson;
  side: SideJson;
  back: { href: string; label: string };
  testId: string;
  extraFacts?: { k: string; v: string; mono?: boolean }[];
  aside?: ReactNode;
  showSideNotes?: boolean;
}) {
  const notes = disc.handlingNotes || disc.conditionNotes || (showSideNotes && side.notes);
  return (
    <>
      <header className="flex flex-wrap items-end justify-between gap-4 border-b border-paper-edge pb-5">
        <div className="space-y-1">
          <BackLink href={back.href}>{back.label}</BackLink>
          <h1 className="text-3xl font-semibold tracking-tight" data-testid={testId}>
            <Link href={`/catalogue/${disc.id}`} className="font-mono hover:underline">
              {disc.shelfMark}
            </Link>
            <span className="text-ink-faint"> · </span>side {side.designation}
          </h1>
          <p className="text-ink-soft">
            {[side.title, side.performers].filter(Boolean).join(" — ") || (
              <span className="text-ink-faint">untitled</span>
            )}
          </p>
          <dl className="flex flex-wrap gap-x-5 gap-y-1 pt-1 text-sm">
            <Fact k="Label" v={[disc.labelName, disc.catalogueNumber].filter(Boolean).join(" ") || "—"} />
            <Fact k="Matrix" v={side.matrixNumber || "—"} mono />
            <Fact k="Take" v={side.take || "—"} mono />
            <Fact
              k="Carrier"
              v={`${formatLabel(disc.format)} · ${speedLabel(disc.nominalSpeedRpm)} rpm · ${disc.groove} groove · ${disc.cut} cut`}
            />
            {extraFacts.map((f) => (
              <Fact key={f.k} {...f} />
            ))}
          </dl>
        </div>
        <div className="flex flex-col items-end gap-1">
          <StatusBadge status={side.status} />
          {aside}
        </div>
      </header>
      <HandlingCautions
        format={disc.format}
        base={disc.base}
        conditionFlags={disc.conditionFlags}
        conditionGrade={disc.conditionGrade}
      />
      {notes ? (
        <Notice tone="caution" title="Notes logged for this disc">
          {disc.conditionNotes ? <p>Condition: {disc.conditionNotes}</p> : null}
          {disc.handlingNotes ? <p>Handling: {disc.handlingNotes}</p> : null}
          {showSideNotes && side.notes ? <p>Side: {side.notes}</p> : null}
        </Notice>
      ) : null}
    </>
  );
}
