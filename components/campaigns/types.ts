/**
 * Preset uses and campaigns as the API sends them to the browser: the server's types with
 * dates as ISO text. Type-only imports, so nothing of the server-only module reaches the bundle.
 */
import type { getCampaign, listCampaigns, presetUses } from "@/lib/campaigns";

type AsJson<T> = T extends Date
  ? string
  : T extends (infer U)[]
    ? AsJson<U>[]
    : T extends object
      ? { [K in keyof T]: AsJson<T[K]> }
      : T;

export type PresetUsesJson = AsJson<Awaited<ReturnType<typeof presetUses>>>;
export type UseSideJson = PresetUsesJson["sides"][number];
export type UseVersionJson = PresetUsesJson["versions"][number];
export type CampaignJson = AsJson<Awaited<ReturnType<typeof getCampaign>>>;
export type CampaignSideJson = CampaignJson["sides"][number];
export type CampaignSummaryJson = AsJson<Awaited<ReturnType<typeof listCampaigns>>[number]>;
