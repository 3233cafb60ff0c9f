/** Shapes of the audit API answers as the browser receives them (dates as ISO text). */
export interface AuditEvent {
  seq: number;
  id: string;
  at: string;
  kind: string;
  subjectType: string;
  subjectId: string | null;
  discId: string | null;
  shelfMark: string | null;
  payload: Record<string, unknown>;
  hash: string;
  prevHash: string;
  actorName: string | null;
  actorId: string | null;
}

export interface CheckpointRef {
  key: string;
  headSeq: number;
  events: number;
  takenAt: string;
}

export interface ChainReport {
  ok: boolean;
  events: number;
  head: { seq: number; hash: string } | null;
  brokenAt?: { seq: number; id: string | null; reason: string };
  contradicts?: CheckpointRef & { reason: string };
  checkpoints: {
    source: "bucket";
    checked: number;
    total: number;
    newest: CheckpointRef | null;
    problems: string[];
  };
  checkedAt: string;
}

export interface LastChainCheck {
  ok: boolean;
  events: number;
  brokenSeq: number | null;
  brokenReason: string | null;
  checkedAt: string;
  runBy: string | null;
  checkpoints: number;
  checkpointSource: string | null;
  contradictedCheckpoint: string | null;
}

export interface LastCheckpoint {
  key: string;
  headSeq: number;
  headHash: string;
  events: number;
  takenAt: string;
  reason: "scheduled" | "requested";
  requestedBy: string | null;
}

export interface FixityAlert {
  id: string;
  objectKind: "transfer" | "render" | "label_image";
  objectId: string;
  objectKey: string;
  outcome: "mismatch" | "missing" | "error";
  detail: string | null;
  checkedAt: string;
  /** Null for a label image of the sleeve, which belongs to the disc. */
  designation: string | null;
  discId: string;
  shelfMark: string;
}

export interface DiscPick {
  id: string;
  shelfMark: string;
  labelName?: string;
  catalogueNumber?: string;
}
