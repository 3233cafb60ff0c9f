"use client";
/**
 * One side as the bench and the review read it: the side with its disc, its curve
 * choices and its accepted flat transfers (both newest first). The query keys are the
 * ones the upload, the curve choice and the render invalidate.
 */
import { useQuery } from "@tanstack/react-query";
import type { CurveChoiceJson, SideWithDisc, TransferJson } from "@/components/bench/types";
import { fetchJson } from "@/lib/http/client";

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
  return { side, choices, transfers };
}
