/** Shapes of the bench's API answers as the browser receives them (dates as ISO text). */
import type { DiscJson, SideJson } from "@/components/catalogue/types";
import type { CurveSpec, MeasurementJson } from "@/lib/curves";
import type { StoredRenderFilter } from "@/lib/validation/records";
import type { ChannelMode } from "@/lib/audio/channel-mode";
import type { evidenceKinds } from "@/lib/validation/transfers";

export type { DiscJson, SideJson };
export type { PresetJson, PresetVersionJson } from "@/components/curves/types";
export type EvidenceKind = (typeof evidenceKinds)[number];

export interface SideWithDisc {
  side: SideJson;
  disc: DiscJson;
}

export interface CurveChoiceJson {
  id: string;
  presetId: string | null;
  presetName: string | null;
  presetVersion: number | null;
  presetSpec: CurveSpec | null;
  overrides: Partial<CurveSpec>;
  spec: CurveSpec;
  cutSpeedRpm: number;
  transferSpeedRpm: number;
  /** The render corrects the speed (cut ÷ transfer). */
  correctSpeed?: boolean;
  rationale: string;
  evidenceKind: EvidenceKind;
  evidence: string;
  chosenAt: string;
  chosenBy: string;
  /** The test-disc measurement the choice rests on, as the server fitted it; null for other evidence. */
  measurement?: MeasurementJson | null;
}

export interface TransferJson {
  id: string;
  fileName: string;
  sha256: string;
  bytes: number | string;
  container: string;
  encoding: string;
  bitsPerSample: number;
  channels: number;
  sampleRateHz: number;
  frames: number | string;
  durationSeconds: number | string;
  bext: unknown;
  stylusSize: string;
  stylusShape: string;
  measuredSpeedRpm: number | string | null;
  chain: string;
  createdAt: string;
  uploadedBy: string;
  /** The register's items it was made with (null for a transfer uploaded without a chain). */
  equipment?: TransferEquipmentJson | null;
}

export interface TransferEquipmentJson {
  chain: { id: string; name: string } | null;
  items: {
    itemId: string;
    kind: import("@/lib/validation/equipment").EquipmentKindName;
    make: string;
    model: string;
    serial: string;
    stylusTipUm: number | null;
    stylusShape: string | null;
    swapped: boolean;
  }[];
  calibration: {
    id: string;
    calibratedOn: string;
    testDisc: string;
    deviationRmsDb: number;
    ageDays: number;
    itemsDiffer: boolean;
  } | null;
}

export interface RenderJson {
  id: string;
  status: "queued" | "running" | "done" | "failed" | "cancelled";
  progress: number;
  /** Running, but its worker stopped renewing the lease: it will be taken up again, or the engineer cancels it. */
  stalled?: boolean;
  channelMode: ChannelMode;
  bitDepth: number;
  sampleRateHz?: number | null;
  sha256: string | null;
  bytes: number | string | null;
  trimDb: number | string | null;
  peakDbfs: number | string | null;
  filter: StoredRenderFilter | null;
  error: string | null;
  transferId?: string;
  curveChoiceId?: string;
  /** The side's access copy: made from its current transfer and curve. */
  current?: boolean;
  /** Set when a newer transfer or curve (or a newer render of them) replaced it; the file and hash stay. */
  supersededAt?: string | null;
  supersededReason?: string | null;
  createdAt: string;
  finishedAt: string | null;
  requestedBy: string;
}

/** A curve offered for comparison in the plot and the player. */
export interface Candidate {
  id: string;
  label: string;
  spec: CurveSpec;
}
