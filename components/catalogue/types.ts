import type { DiscListRow } from "@/lib/catalogue/list-query";
import type { DiscRecord, SideRecord } from "@/lib/catalogue/records";

/** Shapes of the catalogue API answers as the browser receives them (dates as ISO text). */
type AsJson<T> = {
  [K in keyof T]: T[K] extends Date ? string : T[K] extends Date | null ? string | null : T[K];
};

export type SideJson = AsJson<SideRecord>;
export type DiscJson = Omit<AsJson<DiscRecord>, "sides"> & { sides: SideJson[] };
export type DiscListRowJson = AsJson<DiscListRow>;

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
