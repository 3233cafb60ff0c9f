import type { StoredRenderFilter } from "@/lib/validation/records";
/** Shapes of the review API answers as the browser receives them (dates as ISO text). */
export interface ReviewQueueRow {
  id: string;
  designation: string;
  title: string;
  matrixNumber: string;
  submittedAt: string;
  discId: string;
  shelfMark: string;
  labelName: string;
  catalogueNumber: string;
  format: string;
  engineerName: string | null;
}

export type FixityOutcome = "pass" | "mismatch" | "missing" | "error";

export interface FixityCheckJson {
  id: string;
  objectKind: "transfer" | "render";
  objectId: string;
  expectedSha256: string;
  actualSha256: string | null;
  bytes: number | string | null;
  outcome: FixityOutcome;
  detail: string | null;
  checkedAt: string;
}

export interface ReviewJson {
  id: string;
  decision: "approved" | "returned";
  reason: string | null;
  decidedAt: string;
  curatorName: string;
}

/** What a finished render records of its filter (parsed on the server with its schema). */
export type RenderFilterJson = StoredRenderFilter;
