"use client";
/** The lab's settings (fixity cycle, access-copy defaults), read once under one key for every view that shows them. */
import { useQuery } from "@tanstack/react-query";
import { fetchJson } from "@/lib/http/client";

/** As GET /api/settings answers (lib/settings is server-only, so the shape is written out here). */
export interface LabSettingsJson {
  fixityCycleDays: number;
  accessCopyRateHz: "transfer" | number;
  accessCopyBitDepth: 16 | 24;
  /** The lab's contact, written into every bag's bag-info.txt ("" when not set). */
  contactName: string;
  contactEmail: string;
  contactPhone: string;
  contactAddress: string;
}

export function useLabSettings() {
  return useQuery({ queryKey: ["settings"], queryFn: () => fetchJson<LabSettingsJson>("/api/settings") });
}
