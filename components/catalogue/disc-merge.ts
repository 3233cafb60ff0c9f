// When someone else saved a disc while this person edited it: what they changed, and
// the record as it now stands with this person's own edits laid over it. Pure, so the
// rules are unit-tested (tests/unit/disc-merge.test.ts).
import { type DiscFormValues, scalarFields, type SideValues } from "./disc-form-values";
import { sideChanges } from "./fields";

const same = (a: unknown, b: unknown) => JSON.stringify(a) === JSON.stringify(b);
const sideView = (sides: SideValues[]) =>
  sides.map(({ sideId, ...s }) => ({ id: sideId || undefined, ...s }));
const mergedFields = [...scalarFields, "conditionFlags"] as const;

/** The fields someone else changed since `loaded`, with their value and the one in this form. */
export function conflictRows(loaded: DiscFormValues, theirs: DiscFormValues, yours: DiscFormValues) {
  const fields = mergedFields.filter((f) => !same(loaded[f], theirs[f]));
  return {
    fields: fields.map((f) => ({
      field: f,
      theirs: theirs[f],
      yours: yours[f],
      youChanged: !same(loaded[f], yours[f]),
    })),
    sides: sideChanges(sideView(loaded.sides), sideView(theirs.sides)),
    sidesYouChanged: !same(loaded.sides, yours.sides),
  };
}

/**
 * Their version with this person's edits laid over it: each field this person changed
 * since `loaded` takes their value; the others keep the saved one. Edited sides replace
 * the sides; a side they removed meanwhile comes back as a new side.
 */
export function reapplyMine(
  loaded: DiscFormValues,
  theirs: DiscFormValues,
  mine: DiscFormValues,
): DiscFormValues {
  const next: DiscFormValues = { ...theirs };
  for (const f of mergedFields) {
    if (!same(loaded[f], mine[f])) (next as Record<string, unknown>)[f] = mine[f];
  }
  if (!same(loaded.sides, mine.sides)) {
    const live = new Set(theirs.sides.map((s) => s.sideId));
    next.sides = mine.sides.map((s) => (s.sideId && !live.has(s.sideId) ? { ...s, sideId: "" } : s));
  }
  return next;
}
