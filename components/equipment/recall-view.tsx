"use client";
/**
 * Which transfers used this item between two days: the filters live in the address (so a
 * recall can be shared), the list comes from the recall route, and the same filters give
 * the CSV file the lab works through for re-transfer.
 */
import { useQuery } from "@tanstack/react-query";
import Link from "next/link";
import { useId } from "react";
import { isoDateInputProps, statusLabel, when } from "@/components/catalogue/format";
import { formatDuration } from "@/components/bench/progress-bar";
import { Badge } from "@/components/ui/badge";
import { buttonClass } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useUrlState } from "@/hooks/use-url-state";
import { fetchJson } from "@/lib/http/client";
import { hoursText } from "./format";

interface RecallJson {
  transfers: {
    transferId: string;
    createdAt: string;
    sideId: string;
    discId: string;
    shelfMark: string;
    side: string;
    title: string;
    labelName: string;
    catalogueNumber: string;
    fileName: string;
    durationSeconds: number;
    engineer: string;
    chain: string | null;
    swapped: boolean;
    current: boolean;
    sideStatus: string;
  }[];
  hours: number;
}

const dayPattern = /^\d{4}-\d{2}-\d{2}$/;

export function RecallView({ itemId }: { itemId: string }) {
  const uid = useId();
  const [from, setFrom] = useUrlState("from");
  const [to, setTo] = useUrlState("to");
  const [currentOnly, setCurrentOnly] = useUrlState("currentOnly");
  // A half-typed day is not sent: the list keeps the last complete filter.
  const query = new URLSearchParams({
    ...(dayPattern.test(from) ? { from } : {}),
    ...(dayPattern.test(to) ? { to } : {}),
    ...(currentOnly === "1" ? { currentOnly: "1" } : {}),
  });
  const q = query.toString();
  const recall = useQuery({
    queryKey: ["recall", itemId, q],
    queryFn: () => fetchJson<RecallJson>(`/api/equipment/items/${itemId}/transfers?${q}`),
  });
  const csv = `/api/equipment/items/${itemId}/transfers?${new URLSearchParams([...query, ["format", "csv"]]).toString()}`;
  return (
    <div className="space-y-4" data-testid="recall">
      <div className="flex flex-wrap items-end gap-3 rounded-lg border border-paper-edge bg-white/80 p-4">
        <div className="w-40">
          <TextField
            id={`${uid}-from`}
            label="From (inclusive)"
            {...isoDateInputProps}
            value={from}
            onChange={(e) => setFrom(e.target.value)}
            data-testid="recall-from"
          />
        </div>
        <div className="w-40">
          <TextField
            id={`${uid}-to`}
            label="To (inclusive)"
            {...isoDateInputProps}
            value={to}
            onChange={(e) => setTo(e.target.value)}
            data-testid="recall-to"
          />
        </div>
        <label className="mb-2 inline-flex items-center gap-2 text-sm">
          <input
            type="checkbox"
            checked={currentOnly === "1"}
            onChange={(e) => setCurrentOnly(e.target.checked ? "1" : "")}
            className="h-4 w-4 accent-[#2f6f6a]"
            data-testid="recall-current"
          />
          Only transfers a side still stands on
        </label>
        <a
          href={csv}
          className={buttonClass({ variant: "secondary", size: "sm", className: "mb-1 ml-auto" })}
          data-testid="recall-csv"
        >
          Download CSV
        </a>
      </div>
      {recall.error ? (
        <Notice tone="error" title="The list cannot be shown">
          {recall.error.message}
        </Notice>
      ) : null}
      {recall.data ? (
        <p className="text-sm text-ink-soft" data-testid="recall-count">
          {recall.data.transfers.length} transfer{recall.data.transfers.length === 1 ? "" : "s"} ·{" "}
          {hoursText(recall.data.hours)} of playing
        </p>
      ) : null}
      <div className="overflow-x-auto rounded-lg border border-paper-edge bg-white">
        <table className="w-full text-left text-sm" data-testid="recall-table">
          <caption className="sr-only">Transfers made with this item</caption>
          <thead className="bg-paper-deep/40 text-xs uppercase tracking-wide text-ink-soft">
            <tr>
              <th scope="col" className="px-3 py-2 font-semibold">
                Transferred
              </th>
              <th scope="col" className="px-3 py-2 font-semibold">
                Disc and side
              </th>
              <th scope="col" className="px-3 py-2 font-semibold">
                File
              </th>
              <th scope="col" className="px-3 py-2 font-semibold">
                Chain
              </th>
              <th scope="col" className="px-3 py-2 font-semibold">
                Side now
              </th>
            </tr>
          </thead>
          <tbody>
            {recall.isLoading ? (
              <tr>
                <td colSpan={5} className="px-3 py-4 text-ink-faint">
                  Loading…
                </td>
              </tr>
            ) : recall.data?.transfers.length === 0 ? (
              <tr>
                <td colSpan={5} className="px-3 py-4 text-ink-faint">
                  No transfer was made with it between these days.
                </td>
              </tr>
            ) : (
              recall.data?.transfers.map((t) => (
                <tr
                  key={t.transferId}
                  className="border-t border-paper-edge/70 align-top"
                  data-testid="recall-row"
                >
                  <td className="whitespace-nowrap px-3 py-2 font-mono text-xs">{when(t.createdAt)}</td>
                  <td className="px-3 py-2">
                    <Link
                      href={`/catalogue/${t.discId}`}
                      className="font-medium text-shellac-deep hover:underline"
                    >
                      {t.shelfMark}
                    </Link>{" "}
                    side {t.side}
                    <p className="text-xs text-ink-faint">
                      {[t.title, t.labelName, t.catalogueNumber].filter(Boolean).join(" · ")}
                    </p>
                  </td>
                  <td className="px-3 py-2 text-xs">
                    <span className="font-mono">{t.fileName}</span>
                    <p className="text-ink-faint">
                      {formatDuration(t.durationSeconds)} · by {t.engineer}
                    </p>
                  </td>
                  <td className="px-3 py-2 text-xs">
                    {t.chain ?? "—"}
                    {t.swapped ? <p className="text-shellac-deep">swapped in for this transfer</p> : null}
                  </td>
                  <td className="px-3 py-2">
                    <div className="flex flex-wrap gap-1">
                      <Badge>{statusLabel(t.sideStatus)}</Badge>
                      {t.current ? <Badge tone="groove">current transfer</Badge> : <Badge>superseded</Badge>}
                    </div>
                  </td>
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>
    </div>
  );
}
