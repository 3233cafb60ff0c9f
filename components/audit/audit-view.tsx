"use client";
/**
 * The audit page: open fixity failures first, then the chain's verification, the
 * fixity cycle and a check now, and the provenance log (one disc's, with its exports,
 * when ?disc= names one).
 */
import { AccessCopySettings } from "./access-copy-settings";
import { ContactSettings } from "./contact-settings";
import { useQuery } from "@tanstack/react-query";
import Link from "next/link";
import type { DiscJson } from "@/components/catalogue/types";
import { Notice } from "@/components/ui/notice";
import { Panel, SectionLinks } from "@/components/ui/panel";
import { useUrlState } from "@/hooks/use-url-state";
import { fetchJson } from "@/lib/http/client";
import { ChainCheck } from "./chain-check";
import { ExportLinks } from "./export-links";
import { FixityAlerts } from "./fixity-alerts";
import { FixityCycle, FixityRun } from "./fixity-controls";
import { ProvenanceLog } from "./provenance-log";
import type { DiscPick } from "./types";

const UUID = /^[0-9a-f-]{36}$/i;

export function AuditView({
  canEditSettings,
  canRunFixity,
  canListPeople,
}: {
  canEditSettings: boolean;
  canRunFixity: boolean;
  canListPeople: boolean;
}) {
  const [discParam, setDiscParam] = useUrlState("disc");
  const discId = UUID.test(discParam) ? discParam : "";
  const disc = useQuery({
    queryKey: ["disc", discId],
    enabled: !!discId,
    queryFn: () => fetchJson<{ disc: DiscJson }>(`/api/discs/${discId}`),
  });
  const d = disc.data?.disc;
  const pick: DiscPick | null = d
    ? { id: d.id, shelfMark: d.shelfMark, labelName: d.labelName, catalogueNumber: d.catalogueNumber }
    : discId
      ? { id: discId, shelfMark: "…" }
      : null;

  const sections = [
    { id: "log", label: d ? `Provenance of ${d.shelfMark}` : "Provenance log" },
    ...(d ? [{ id: "exports", label: "Exports" }] : []),
    { id: "chain", label: "Chain check" },
    { id: "fixity", label: "Fixity and access copies" },
  ];
  return (
    <div className="space-y-6">
      <FixityAlerts />
      <SectionLinks sections={sections} />

      {/* The log is what people come for: first, with the disc's exports beside it when a disc is chosen. */}
      <div className={d ? "grid gap-6 2xl:grid-cols-[minmax(0,1fr)_24rem]" : undefined}>
        <Panel id="log" title={d ? `Provenance of ${d.shelfMark}` : "Provenance log"}>
          <ProvenanceLog
            disc={pick}
            onPickDisc={(p) => setDiscParam(p?.id ?? "")}
            canListPeople={canListPeople}
          />
        </Panel>
        {d ? (
          <Panel
            id="exports"
            className="self-start"
            title={`Exports for ${d.shelfMark}`}
            actions={
              <Link
                href={`/catalogue/${d.id}`}
                className="text-sm text-shellac-deep underline underline-offset-2"
              >
                Open the disc
              </Link>
            }
          >
            <ExportLinks disc={d} />
          </Panel>
        ) : null}
      </div>

      {discId && disc.error ? (
        <Notice tone="error" title="That disc could not be opened">
          {disc.error.message}
        </Notice>
      ) : null}

      <div className="grid gap-6 xl:grid-cols-2">
        <Panel id="chain" className="self-start" title="Chain of the provenance log">
          <ChainCheck />
        </Panel>
        <Panel id="fixity" className="self-start" title="Fixity">
          <div className="space-y-5">
            <FixityCycle canEdit={canEditSettings} />
            <div className="border-t border-paper-edge pt-4">
              <h3 className="mb-2 font-sans text-sm font-semibold">Access copies</h3>
              <AccessCopySettings canEdit={canEditSettings} />
            </div>
            <div className="border-t border-paper-edge pt-4">
              <h3 className="mb-2 font-sans text-sm font-semibold">The lab&apos;s contact in packages</h3>
              <ContactSettings canEdit={canEditSettings} />
            </div>
            {canRunFixity ? (
              <div className="border-t border-paper-edge pt-4">
                <h3 className="mb-2 font-sans text-sm font-semibold">Check one disc&apos;s files now</h3>
                <FixityRun initialDisc={pick && d ? pick : null} />
              </div>
            ) : null}
          </div>
        </Panel>
      </div>
    </div>
  );
}
