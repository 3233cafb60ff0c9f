"use client";
/**
 * The lab's curve presets and one preset's versions, under one query key each, so the
 * curve library, the workbench and the bench share the cache and a save refreshes them all.
 */
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { PresetJson, PresetVersionJson } from "@/components/curves/types";
import type { CurveSpec } from "@/lib/curves";
import { fetchJson } from "@/lib/http/client";

const presetUrl = (presetId: string) => `/api/curves/presets/${encodeURIComponent(presetId)}`;

export function usePresets() {
  return useQuery({
    queryKey: ["curve-presets"],
    queryFn: () => fetchJson<{ presets: PresetJson[] }>("/api/curves/presets"),
  });
}

export function usePreset(presetId: string) {
  return useQuery({
    queryKey: ["curve-preset", presetId],
    queryFn: () => fetchJson<{ preset: PresetJson }>(presetUrl(presetId)),
    enabled: !!presetId,
  });
}

export function usePresetVersions(presetId: string) {
  return useQuery({
    queryKey: ["curve-preset-versions", presetId],
    queryFn: () => fetchJson<{ versions: PresetVersionJson[] }>(`${presetUrl(presetId)}/versions`),
    enabled: !!presetId,
  });
}

export interface SavePresetInput {
  /** A new version of this preset; without it, a new preset. */
  presetId?: string;
  name: string;
  spec: CurveSpec;
  notes: string;
  changeNote: string;
  /** The earlier versions a new version corrects, and what was wrong (lib/presets). */
  corrects?: number[];
  correctionNote?: string;
}

/**
 * Saves a curve through POST /api/curves/presets (a new preset) or PATCH
 * /api/curves/presets/[id] (a new version): the one way a preset is written, the same
 * routes scripts and tests call. `onSaved` runs before the caches are refreshed, so the
 * caller can mark the saved version as already in its editor.
 */
export function useSavePreset(onSaved: (preset: PresetJson) => void) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async ({ presetId, ...body }: SavePresetInput) =>
      (
        await fetchJson<{ preset: PresetJson }>(presetId ? presetUrl(presetId) : "/api/curves/presets", {
          method: presetId ? "PATCH" : "POST",
          body: JSON.stringify(body),
        })
      ).preset,
    onSuccess: async (preset) => {
      onSaved(preset);
      await Promise.all(
        [["curve-presets"], ["curve-preset", preset.id], ["curve-preset-versions", preset.id]].map(
          (queryKey) => queryClient.invalidateQueries({ queryKey }),
        ),
      );
    },
  });
}
