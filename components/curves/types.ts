/**
 * Curve presets as the API sends them to the browser: the server's types with dates as
 * ISO text. Type-only imports, so nothing of the server-only module reaches the bundle.
 */
import type { PresetSummary, PresetVersion } from "@/lib/presets";

type AsJson<T> = { [K in keyof T]: T[K] extends Date ? string : T[K] };

export type PresetVersionJson = AsJson<PresetVersion>;

/** A preset at its current version. */
export type PresetJson = AsJson<PresetSummary>;
