// The disc form's values: the one shape of a disc (lib/validation/catalogue.ts) as the
// form's controls hold it, every field as text. Derived, not written out again.
import {
  type StoredDisc,
  storedDiscFields,
  type StoredSide,
  storedSideFields,
} from "@/lib/validation/catalogue";
import { valueText } from "@/lib/value-text";
import type { DiscJson } from "./types";

/** Each stored field as the text its control shows (a list stays a list). */
type AsFormText<T> = { [K in keyof T]-?: T[K] extends readonly string[] ? string[] : string };

export type SideValues = AsFormText<StoredSide> & {
  /** The side's id in the record ("" for a new side); kept apart from the field array's own keys. */
  sideId: string;
};

export type DiscFormValues = AsFormText<StoredDisc> & { sides: SideValues[]; version: number };

/** The disc's fields other than the lists (flags, sides), in the form's order. */
export type ScalarField = Exclude<keyof StoredDisc, "conditionFlags">;
export const scalarFields = storedDiscFields.filter((f): f is ScalarField => f !== "conditionFlags");

const text = (v: unknown) => (v === null || v === undefined ? "" : valueText(v));

export function toFormValues(d: DiscJson): DiscFormValues {
  const fields = Object.fromEntries(
    storedDiscFields.map((f) => {
      const v = d[f];
      return [f, Array.isArray(v) ? [...v] : text(v)];
    }),
  ) as AsFormText<StoredDisc>;
  return {
    ...fields,
    sides: d.sides.map((s) => ({
      ...(Object.fromEntries(storedSideFields.map((f) => [f, s[f]])) as AsFormText<StoredSide>),
      sideId: s.id,
    })),
    version: d.version,
  };
}

export const blankSide = (designation: string): SideValues => ({
  sideId: "",
  designation,
  matrixNumber: "",
  take: "",
  title: "",
  performers: "",
  notes: "",
});

export const emptyValues: DiscFormValues = {
  accessionId: "",
  shelfMark: "",
  labelName: "",
  catalogueNumber: "",
  format: "shellac_78",
  base: "",
  diameterIn: "10",
  nominalSpeedRpm: "78",
  groove: "coarse",
  cut: "lateral",
  recordingDate: "",
  recordedFromYear: "",
  recordedToYear: "",
  conditionGrade: "unassessed",
  conditionFlags: [],
  conditionNotes: "",
  handlingNotes: "",
  sides: [blankSide("A"), blankSide("B")],
  version: 0,
};
