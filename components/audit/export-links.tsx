"use client";
/**
 * The record of one disc for the repository: its JSON record, its PREMIS XML, and
 * the package (record, PREMIS and the files) once every side is approved; and the
 * record of the accession it came in.
 */
import { statusLabel } from "@/components/catalogue/format";
import type { DiscJson } from "@/components/catalogue/types";
import { cx } from "@/components/ui/cx";

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
              Package (zip)
            </span>
          ) : (
            <a
              href={`${base}?format=zip`}
              className={cx(link, "border-shellac/50 text-shellac-deep")}
              download
              data-testid="export-zip"
            >
              Package (zip): record, PREMIS and files
            </a>
          )}
        </div>
        {notApproved.length ? (
          <p className="text-xs text-ink-soft" data-testid="export-zip-why">
            The package is made once every side is approved. Not yet:{" "}
            {notApproved
              .map((s) => `side ${s.designation} (${statusLabel(s.status).toLowerCase()})`)
              .join(", ")}
            .
          </p>
        ) : null}
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
        </div>
      </div>
    </div>
  );
}
