/**
 * Curve presets as the API sends them to the browser (dates as ISO text). Written out
 * here rather than derived from lib/presets, which is server-only.
 */
import type { CurveSpec } from "@/lib/curves";

export interface PresetVersionJson {
  presetId: string;
  version: number;
  name: string;
  spec: CurveSpec;
  notes: string;
  changeNote: string;
  createdAt: string;
  createdBy: string | null;
}

/** A preset at its current version. */
export interface PresetJson extends PresetVersionJson {
  id: string;
  currentVersion: number;
}
