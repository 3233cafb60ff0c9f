/**
 * Parser for "hz,db" point tables: one point per line, an optional header line
 * (the first non-comment line when it is not numeric), comments after '#',
 * blank lines ignored. Errors name the line (1-based) and the field.
 */
import type { CurvePoint } from "./types";

export class PointsParseError extends Error {
  readonly line: number;
  readonly field: "hz" | "db" | "line";
  constructor(line: number, field: "hz" | "db" | "line", message: string) {
    super(`Line ${line}, ${field}: ${message}`);
    this.name = "PointsParseError";
    this.line = line;
    this.field = field;
  }
}

const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;

export function parsePointsCsv(text: string): CurvePoint[] {
  const points: CurvePoint[] = [];
  const lines = text.split(/\r\n|\n|\r/);
  let sawData = false;
  lines.forEach((raw, index) => {
    const lineNo = index + 1;
    const hash = raw.indexOf("#");
    const line = (hash >= 0 ? raw.slice(0, hash) : raw).trim();
    if (line === "") return;
    const fields = line.split(",").map((f) => f.trim());
    if (!sawData && !NUMBER.test(fields[0])) {
      // A header such as "hz,db" or "frequency,level"; only allowed before the first point.
      sawData = true;
      if (fields.length !== 2)
        throw new PointsParseError(
          lineNo,
          "line",
          `expected a header of two columns (hz,db), found ${fields.length}.`,
        );
      return;
    }
    sawData = true;
    if (fields.length !== 2) {
      throw new PointsParseError(
        lineNo,
        "line",
        `give two values, frequency in Hz and level in dB, separated by a comma (this line has ${fields.length}).`,
      );
    }
    const [hzText, dbText] = fields;
    if (!NUMBER.test(hzText)) throw new PointsParseError(lineNo, "hz", `"${hzText}" is not a number.`);
    if (!NUMBER.test(dbText)) throw new PointsParseError(lineNo, "db", `"${dbText}" is not a number.`);
    const hz = Number(hzText);
    const db = Number(dbText);
    if (!(hz > 0) || !Number.isFinite(hz))
      throw new PointsParseError(lineNo, "hz", `the frequency must be above 0 Hz (it is ${hzText}).`);
    if (!Number.isFinite(db))
      throw new PointsParseError(lineNo, "db", `the level must be a number of dB (it is ${dbText}).`);
    points.push({ hz, db });
  });
  if (points.length === 0)
    throw new PointsParseError(
      lines.length,
      "line",
      "no points found: give one frequency,level pair per line.",
    );
  return points;
}
