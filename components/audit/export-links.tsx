"use client";
/**
 * The record of one disc for the repository: its JSON record, its PREMIS XML, and its
 * BagIt package (flat transfers, access copies, label images, record and PREMIS) once every
 * side is approved, as a zip or written into the delivery bucket; and the same for the
 * accession it came in (its approved discs).
 */
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { statusLabel, when } from "@/components/catalogue/format";
import type { DiscJson } from "@/components/catalogue/types";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { Notice } from "@/components/ui/notice";
import { fetchJson } from "@/lib/http/client";

const link =
  "inline-flex h-9 items-center rounded-md border border-paper-edge bg-white px-3 text-sm font-medium hover:border-ink-faint";

export function ExportLinks({ disc }: { disc: DiscJson }) {
  const notApproved = disc.sides.filter((s) => s.status !== "approved");
  const base = `/api/discs/${disc.id}/export`;
  return (
    <div className="space-y-3" data-testid="export-links">
      <div className="space-y-1.5">
        <p className="text-sm font-medium">
          Disc <span className="font-mono">{disc.shelfMark}</span>
        </p>
        <div className="flex flex-wrap gap-2">
          <a href={`${base}?format=json`} className={link} download data-testid="export-json">
            JSON record
          </a>
          <a href={`${base}?format=premis`} className={link} download data-testid="export-premis">
            PREMIS XML
          </a>
          {notApproved.length ? (
            <span
              className={cx(link, "cursor-not-allowed border-dashed text-ink-faint hover:border-paper-edge")}
              aria-disabled="true"
              data-testid="export-zip-unavailable"
            >
              BagIt package (zip)
            </span>
          ) : (
            <a
              href={`${base}?format=zip`}
              className={cx(link, "border-shellac/50 text-shellac-deep")}
              download
              data-testid="export-zip"
            >
              BagIt package (zip): masters, access copies, labels, record, PREMIS
            </a>
          )}
        </div>
        {notApproved.length ? (
          <p className="text-xs text-ink-soft" data-testid="export-zip-why">
            The BagIt package is made once every side is approved. Not yet:{" "}
            {notApproved
              .map((s) => `side ${s.designation} (${statusLabel(s.status).toLowerCase()})`)
              .join(", ")}
            .
          </p>
        ) : null}
        {notApproved.length ? null : <Deliveries scope="discs" id={disc.id} />}
      </div>
      <div className="space-y-1.5">
        <p className="text-sm font-medium">
          Accession <span className="font-mono">{disc.accessionIdentifier}</span>
        </p>
        <div className="flex flex-wrap gap-2">
          <a
            href={`/api/accessions/${disc.accessionId}/export?format=json`}
            className={link}
            download
            data-testid="export-accession-json"
          >
            JSON record
          </a>
          <a
            href={`/api/accessions/${disc.accessionId}/export?format=premis`}
            className={link}
            download
            data-testid="export-accession-premis"
          >
            PREMIS XML
          </a>
          <a
            href={`/api/accessions/${disc.accessionId}/export?format=zip`}
            className={link}
            download
            data-testid="export-accession-zip"
          >
            BagIt package (zip) of its approved discs
          </a>
        </div>
        <Deliveries scope="accessions" id={disc.accessionId} />
      </div>
    </div>
  );
}

interface DeliveryJson {
  id: string;
  state: "queued" | "running" | "done" | "failed";
  bucket: string;
  prefix: string;
  payloadOxum: string | null;
  tagmanifestSha256: string | null;
  error: string | null;
  requestedAt: string;
  requestedBy: string;
}

const stateWords = {
  queued: "queued",
  running: "being written",
  done: "delivered",
  failed: "stopped",
} as const;

/** Bags written into the delivery bucket for repositories that collect from there, and a button to write one. */
function Deliveries({ scope, id }: { scope: "discs" | "accessions"; id: string }) {
  const queryClient = useQueryClient();
  const key = ["deliveries", scope, id];
  const list = useQuery({
    queryKey: key,
    queryFn: () => fetchJson<{ deliveries: DeliveryJson[] }>(`/api/${scope}/${id}/deliveries`),
    refetchInterval: (q) =>
      q.state.data?.deliveries.some((d) => d.state === "queued" || d.state === "running") ? 2000 : false,
  });
  const [said, setSaid] = useState<string | null>(null);
  const deliver = async () => {
    setSaid(null);
    try {
      await fetchJson(`/api/${scope}/${id}/deliveries`, { method: "POST" });
      await queryClient.invalidateQueries({ queryKey: key });
    } catch (err) {
      setSaid(err instanceof Error ? err.message : String(err));
    }
  };
  const latest = list.data?.deliveries.slice(0, 3) ?? [];
  return (
    <div className="space-y-2 pt-1" data-testid={`deliveries-${scope}`}>
      <Button
        type="button"
        variant="secondary"
        size="sm"
        onClick={() => void deliver()}
        data-testid="deliver-bag"
      >
        Write the bag to the delivery bucket
      </Button>
      {said ? <Notice tone="error">{said}</Notice> : null}
      {latest.length ? (
        <ul className="space-y-1 text-xs">
          {latest.map((d) => (
            <li key={d.id} className="break-all" data-testid="delivery">
              <span
                className={cx(
                  "font-semibold",
                  d.state === "failed" ? "text-alarm" : d.state === "done" ? "text-moss" : "",
                )}
              >
                {stateWords[d.state]}
              </span>{" "}
              · {when(d.requestedAt)} by {d.requestedBy} ·{" "}
              <span className="font-mono">
                s3://{d.bucket}/{d.prefix}
              </span>
              {d.tagmanifestSha256 ? (
                <span className="block font-mono text-ink-faint">
                  tagmanifest SHA-256 {d.tagmanifestSha256.slice(0, 16)}… · Payload-Oxum {d.payloadOxum}
                </span>
              ) : null}
              {d.error ? <span className="block text-alarm">{d.error}</span> : null}
            </li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}
