"use client";
/**
 * A preset's uses and the lab's re-render campaigns, read and changed through their routes
 * (the same the tests and scripts call). A running campaign's page polls every 2 s.
 */
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CampaignJson, CampaignSummaryJson, PresetUsesJson } from "@/components/campaigns/types";
import { fetchJson } from "@/lib/http/client";

export function usePresetUses(presetId: string) {
  return useQuery({
    queryKey: ["preset-uses", presetId],
    queryFn: () => fetchJson<PresetUsesJson>(`/api/curves/presets/${encodeURIComponent(presetId)}/uses`),
  });
}

export function useCampaigns(presetId?: string) {
  return useQuery({
    queryKey: ["campaigns", presetId ?? "all"],
    queryFn: () =>
      fetchJson<{ campaigns: CampaignSummaryJson[] }>(
        presetId ? `/api/campaigns?presetId=${encodeURIComponent(presetId)}` : "/api/campaigns",
      ),
    refetchInterval: (q) => (q.state.data?.campaigns.some((c) => c.state === "running") ? 5000 : false),
  });
}

export function useCampaign(id: string) {
  return useQuery({
    queryKey: ["campaign", id],
    queryFn: () => fetchJson<CampaignJson>(`/api/campaigns/${encodeURIComponent(id)}`),
    // Client-side polling while the campaign runs; it stops once every side has settled.
    refetchInterval: (q) => (q.state.data?.campaign.state === "finished" ? false : 2000),
  });
}

export function useStartCampaign() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: { presetId: string; correctingVersion: number; sideIds: string[]; title?: string }) =>
      fetchJson<{ campaignId: string }>("/api/campaigns", { method: "POST", body: JSON.stringify(body) }),
    onSuccess: async (_r, body) => {
      await Promise.all([
        queryClient.invalidateQueries({ queryKey: ["preset-uses", body.presetId] }),
        queryClient.invalidateQueries({ queryKey: ["campaigns"] }),
      ]);
    },
  });
}

export function useCampaignAction(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ action, sideIds }: { action: "cancel" | "retry"; sideIds?: string[] }) =>
      fetchJson<{ cancelled?: number; stillRendering?: number; retried?: number }>(
        `/api/campaigns/${encodeURIComponent(id)}/${action}`,
        { method: "POST", body: JSON.stringify(sideIds ? { sideIds } : {}) },
      ),
    onSuccess: async () => {
      await Promise.all([
        queryClient.invalidateQueries({ queryKey: ["campaign", id] }),
        queryClient.invalidateQueries({ queryKey: ["campaigns"] }),
      ]);
    },
  });
}
