"use client";
/**
 * One side as the bench and the review read it: the side with its disc, its curve
 * choices, its accepted flat transfers and its renders (all newest first), and what the
 * side stands on now. The query keys are the ones the upload, the curve choice and the
 * render invalidate.
 */
import { queryOptions, useQuery } from "@tanstack/react-query";
import type { CurveChoiceJson, RenderJson, SideWithDisc, TransferJson } from "@/components/bench/types";
import { fetchJson } from "@/lib/http/client";

/** The side's renders; the render panel adds polling while one is in hand. */
export function sideRendersQuery(sideId: string) {
  return queryOptions({
    queryKey: ["renders", sideId],
    queryFn: () => fetchJson<{ renders: RenderJson[] }>(`/api/sides/${sideId}/renders`),
  });
}

export function useSide(sideId: string) {
  const side = useQuery({
    queryKey: ["side", sideId],
    queryFn: () => fetchJson<SideWithDisc>(`/api/sides/${sideId}`),
  });
  const choices = useQuery({
    queryKey: ["curve-choices", sideId],
    queryFn: () => fetchJson<{ choices: CurveChoiceJson[] }>(`/api/sides/${sideId}/curve-choices`),
  });
  const transfers = useQuery({
    queryKey: ["transfers", sideId],
    queryFn: () => fetchJson<{ transfers: TransferJson[] }>(`/api/sides/${sideId}/transfers`),
  });
  const renders = useQuery(sideRendersQuery(sideId));
  // What the side stands on now, by the ids the server keeps (never "the latest" of each list).
  const s = side.data?.side;
  const now = {
    choice: choices.data?.choices.find((c) => c.id === s?.currentCurveChoiceId) ?? null,
    transfer: transfers.data?.transfers.find((t) => t.id === s?.currentTransferId) ?? null,
    render: renders.data?.renders.find((r) => r.id === s?.currentRenderId && r.status === "done") ?? null,
  };
  return { side, choices, transfers, renders, now };
}
