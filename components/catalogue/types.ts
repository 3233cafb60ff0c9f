/** Shapes of the catalogue API answers as the browser receives them (dates as ISO text). */
export interface SideJson {
  id: string;
  designation: string;
  matrixNumber: string;
  take: string;
  title: string;
  performers: string;
  notes: string;
  status: string;
  assignedEngineerId: string | null;
  assignedEngineerName: string | null;
  returnReason: string | null;
  version: number;
}

export interface DiscJson {
  id: string;
  accessionId: string;
  accessionIdentifier: string;
  shelfMark: string;
  labelName: string;
  catalogueNumber: string;
  format: string;
  base: string | null;
  diameterIn: number | null;
  nominalSpeedRpm: number;
  groove: "coarse" | "micro";
  cut: "lateral" | "vertical";
  recordingDate: string | null;
  recordedFromYear: number | null;
  recordedToYear: number | null;
  conditionGrade: string;
  conditionFlags: string[];
  conditionNotes: string;
  handlingNotes: string;
  version: number;
  createdAt: string;
  updatedAt: string;
  sides: SideJson[];
}

export interface DiscListRowJson {
  id: string;
  shelfMark: string;
  labelName: string;
  catalogueNumber: string;
  format: string;
  nominalSpeedRpm: number;
  accessionIdentifier: string;
  conditionGrade: string;
  updatedAt: string;
  sides: { id: string; designation: string; matrixNumber: string; title: string; status: string; assignedEngineerName: string | null }[];
}

export interface AccessionJson {
  id: string;
  identifier: string;
  source: string;
  receivedOn: string;
  notes: string;
  discCount?: number;
}

export interface EventJson {
  id: string;
  seq: number;
  at: string;
  kind: string;
  subjectType: string;
  subjectId: string;
  payload: Record<string, unknown>;
  hash: string;
  actorName: string | null;
}

export interface Engineer {
  id: string;
  name: string;
}
