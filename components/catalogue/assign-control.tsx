"use client";
import { useMutation, useQuery } from "@tanstack/react-query";
import { useId, useState } from "react";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { fetchJson } from "@/lib/http/client";
import type { Engineer } from "./types";

interface AssignResult {
  assigned: number;
  skipped: { sideId: string; reason: string }[];
}

export function useEngineers(enabled = true) {
  return useQuery({
    queryKey: ["engineers"],
    queryFn: () => fetchJson<{ engineers: Engineer[] }>("/api/engineers"),
    enabled,
    staleTime: 60_000,
  });
}

/**
 * Picks a transfer engineer and assigns sides (or every side of some discs) to them.
 * The server decides which sides can move and reports the ones it left.
 */
export function AssignControl({
  discIds = [],
  sideIds = [],
  what,
  onAssigned,
  testId = "assign",
}: {
  discIds?: string[];
  sideIds?: string[];
  /** Says what will be assigned, e.g. "3 selected discs". */
  what: string;
  onAssigned?: (r: AssignResult) => void;
  testId?: string;
}) {
  const id = useId();
  const engineers = useEngineers();
  const [engineerId, setEngineerId] = useState("");
  const [result, setResult] = useState<{ engineer: string; r: AssignResult } | null>(null);
  const nothing = discIds.length + sideIds.length === 0;
  const assign = useMutation({
    mutationFn: () =>
      fetchJson<AssignResult>("/api/assignments", {
        method: "POST",
        body: JSON.stringify({ engineerId, discIds, sideIds }),
      }),
    onSuccess: (r) => {
      setResult({
        engineer: engineers.data?.engineers.find((e) => e.id === engineerId)?.name ?? "the engineer",
        r,
      });
      onAssigned?.(r);
    },
    onMutate: () => setResult(null),
  });

  return (
    <div className="space-y-3" data-testid={testId}>
      <div className="flex flex-wrap items-end gap-3">
        <div className="space-y-1">
          <label htmlFor={`${id}-engineer`} className="block text-sm font-medium">
            Transfer engineer
          </label>
          <select
            id={`${id}-engineer`}
            value={engineerId}
            onChange={(e) => setEngineerId(e.target.value)}
            className="h-9 min-w-52 rounded-md border border-paper-edge bg-white px-2 text-sm"
            data-testid={`${testId}-engineer`}
          >
            <option value="">{engineers.isLoading ? "Loading…" : "Choose an engineer"}</option>
            {engineers.data?.engineers.map((e) => (
              <option key={e.id} value={e.id}>
                {e.name}
              </option>
            ))}
          </select>
        </div>
        <Button
          type="button"
          size="sm"
          className="h-9"
          disabled={!engineerId || nothing || assign.isPending}
          onClick={() => assign.mutate()}
          data-testid={`${testId}-submit`}
        >
          {assign.isPending ? "Assigning…" : `Assign ${what}`}
        </Button>
      </div>
      {engineers.error ? <Notice tone="error">{engineers.error.message}</Notice> : null}
      {assign.error ? <Notice tone="error">{assign.error.message}</Notice> : null}
      {result ? (
        <Notice
          tone={result.r.assigned ? "success" : "info"}
          title={`${result.r.assigned} side${result.r.assigned === 1 ? "" : "s"} assigned to ${result.engineer}.`}
          testId={`${testId}-result`}
        >
          {result.r.skipped.length ? (
            <>
              <p>Left as they are ({result.r.skipped.length}):</p>
              <ul className="mt-1 list-disc pl-5">
                {result.r.skipped.slice(0, 20).map((s) => (
                  <li key={s.sideId}>{s.reason}</li>
                ))}
                {result.r.skipped.length > 20 ? <li>… and {result.r.skipped.length - 20} more</li> : null}
              </ul>
            </>
          ) : result.r.assigned ? (
            <p>They will find the sides in their queue; an e-mail is on its way.</p>
          ) : (
            <p>Nothing needed to change: those sides were already with {result.engineer}.</p>
          )}
        </Notice>
      ) : null}
    </div>
  );
}
