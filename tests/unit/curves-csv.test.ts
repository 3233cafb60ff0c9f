import { describe, expect, it } from "vitest";
import { parsePointsCsv, PointsParseError } from "@/lib/curves";
import { thrownBy } from "../support/errors";

const errorOf = (text: string) => thrownBy(PointsParseError, () => parsePointsCsv(text));

describe("points CSV", () => {
  it("reads points with an optional header, comments and blank lines", () => {
    const text = "# RIAA excerpt\nhz,db\n20,19.27\n\n1000, 0 # reference\n20000,-19.62\n";
    expect(parsePointsCsv(text)).toEqual([
      { hz: 20, db: 19.27 },
      { hz: 1000, db: 0 },
      { hz: 20000, db: -19.62 },
    ]);
    expect(parsePointsCsv("50,1e1\n60,-2.5")).toEqual([
      { hz: 50, db: 10 },
      { hz: 60, db: -2.5 },
    ]);
  });

  it("names the line and field of a bad number", () => {
    const e = errorOf("hz,db\n20,19.27\n1000,zero\n");
    expect(e.line).toBe(3);
    expect(e.field).toBe("db");
    expect(e.message).toMatch(/Line 3, db/);
    const f = errorOf("20,1\nabc,2\n");
    expect(f.line).toBe(2);
    expect(f.field).toBe("hz");
  });

  it("refuses non-positive frequencies and wrong field counts", () => {
    expect(errorOf("0,1\n").field).toBe("hz");
    expect(errorOf("-5,1\n").line).toBe(1);
    const e = errorOf("20,1\n30,2,3\n");
    expect(e.line).toBe(2);
    expect(e.field).toBe("line");
  });

  it("refuses a file with no points", () => {
    expect(errorOf("# nothing\nhz,db\n").field).toBe("line");
  });
});
