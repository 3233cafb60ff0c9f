"use client";
/**
 * The lab's curve presets and one preset's versions, under one query key each, so the
 * curve library, the workbench and the bench share the cache and a save refreshes them all.
 */
import { useQuery } from "@tanstack/react-query";
import type { PresetJson, PresetVersionJson } from "@/components/curves/types";
import { fetchJson } from "@/lib/http/client";

export function usePresets() {
  return useQuery({
    queryKey: ["curve-presets"],
    queryFn: () => fetchJson<{ presets: PresetJson[] }>("/api/curves/presets"),
  });
}

export function usePresetVersions(presetId: string) {
  return useQuery({
    queryKey: ["curve-preset-versions", presetId],
    queryFn: () =>
      fetchJson<{ versions: PresetVersionJson[] }>(
        `/api/curves/presets/${encodeURIComponent(presetId)}/versions`,
      ),
    enabled: !!presetId,
  });
}
