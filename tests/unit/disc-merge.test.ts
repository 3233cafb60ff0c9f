// The disc form's conflict merge: what someone else changed while this person edited,
// and their version with this person's edits laid over it.
import { describe, expect, it } from "vitest";
import { blankSide, type DiscFormValues, emptyValues } from "@/components/catalogue/disc-form-values";
import { conflictRows, reapplyMine } from "@/components/catalogue/disc-merge";

const loaded: DiscFormValues = {
  ...emptyValues,
  accessionId: "6f1c2b7e-8a5d-4c1e-9b2a-0d3e4f5a6b7c",
  shelfMark: "MH-78-001",
  labelName: "Rillton",
  catalogueNumber: "R 1",
  conditionFlags: ["wear"],
  sides: [
    { ...blankSide("A"), sideId: "side-a", title: "Reel" },
    { ...blankSide("B"), sideId: "side-b", title: "Jig" },
  ],
  version: 3,
};

describe("a conflict on the disc form", () => {
  it("lists only the fields they changed, marking those this person changed too", () => {
    const theirs = { ...loaded, labelName: "Rillton Records", catalogueNumber: "R 9", version: 4 };
    const yours = { ...loaded, catalogueNumber: "R 2", handlingNotes: "Gloves." };
    const rows = conflictRows(loaded, theirs, yours);
    expect(rows.fields).toEqual([
      { field: "labelName", theirs: "Rillton Records", yours: "Rillton", youChanged: false },
      { field: "catalogueNumber", theirs: "R 9", yours: "R 2", youChanged: true },
    ]);
    expect(rows.sides).toEqual([]);
    expect(rows.sidesYouChanged).toBe(false);
  });

  it("names their side changes in words", () => {
    const theirs = {
      ...loaded,
      sides: [{ ...loaded.sides[0], title: "Reel in D" }],
    };
    const rows = conflictRows(loaded, theirs, loaded);
    expect(rows.fields).toEqual([]);
    expect(rows.sides).toEqual(["side A title: Reel → Reel in D", "side B removed"]);
  });

  it("lays this person's changed fields over theirs and keeps their other changes", () => {
    const theirs = {
      ...loaded,
      labelName: "Rillton Records",
      conditionFlags: ["wear", "cracks"],
      version: 4,
    };
    const mine = { ...loaded, catalogueNumber: "R 2", labelName: "Rillton Ltd" };
    const next = reapplyMine(loaded, theirs, mine);
    expect(next).toEqual({
      ...theirs,
      catalogueNumber: "R 2",
      // Both changed the label: this person's edit is the one being reapplied.
      labelName: "Rillton Ltd",
    });
    expect(next.version).toBe(4);
  });

  it("keeps their sides unless this person edited sides, and re-adds a side they removed as new", () => {
    const theirs = { ...loaded, sides: [loaded.sides[0]], version: 4 };
    expect(reapplyMine(loaded, theirs, { ...loaded, labelName: "X" }).sides).toEqual(theirs.sides);
    const mine = {
      ...loaded,
      sides: [loaded.sides[0], { ...loaded.sides[1], title: "Jig in G" }],
    };
    expect(reapplyMine(loaded, theirs, mine).sides).toEqual([
      loaded.sides[0],
      { ...loaded.sides[1], sideId: "", title: "Jig in G" },
    ]);
  });
});
