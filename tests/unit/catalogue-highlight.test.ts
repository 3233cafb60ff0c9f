import { describe, expect, it } from "vitest";
import { highlightParts, searchTerms } from "../../lib/catalogue/highlight";

const marked = (text: string, q: string, numbers = false) =>
  highlightParts(text, searchTerms(q), { numbers })
    .map((p) => (p.match ? `[${p.text}]` : p.text))
    .join("");

describe("catalogue search highlighting", () => {
  it("marks each searched word wherever it stands as a whole word, in any case", () => {
    expect(marked("Willow Harbour Song", "harbour willow")).toBe("[Willow] [Harbour] Song");
    expect(marked("Carrow and the Dunmore Quartet", "CARROW")).toBe("[Carrow] and the Dunmore Quartet");
  });

  it("does not mark a word inside a longer word (full-text search matches whole words)", () => {
    expect(marked("Harbourside Blues", "harbour")).toBe("Harbourside Blues");
  });

  it("leaves out words the search excludes and the word 'or'", () => {
    expect(searchTerms('lantern -meadow or -"blue river"').words).toEqual(["lantern"]);
    expect(marked("Lantern Meadow", "lantern -meadow")).toBe("[Lantern] Meadow");
  });

  it("marks the whole search as a part of a number, as the number search finds it", () => {
    expect(marked("QU 41377", "QU 41", true)).toBe("[QU 41]377");
    expect(marked("B10412-A", "b104", true)).toBe("[B104]12-A");
    expect(marked("Harbourside", "harbour", true)).toBe("[Harbour]side");
  });

  it("marks nothing without a search, and keeps the text whole", () => {
    expect(highlightParts("Evening Song", searchTerms(""))).toEqual([{ text: "Evening Song", match: false }]);
    expect(highlightParts("", searchTerms("song"))).toEqual([]);
  });

  it("merges overlapping matches into one mark", () => {
    expect(marked("Blue Moonlit Blue", "blue moonlit")).toBe("[Blue] [Moonlit] [Blue]");
    expect(marked("BX-0012 Blue", "bx-0012 blue", true)).toBe("[BX-0012 Blue]");
  });
});
