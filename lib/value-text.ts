/**
 * A value read from JSON (a stored record, an event's payload) as text, the way `String()`
 * writes strings, numbers, booleans and lists of them; an object comes out as its JSON
 * rather than "[object Object]".
 */
export function valueText(v: unknown): string {
  if (typeof v === "string") return v;
  if (Array.isArray(v)) return v.map((x) => (x === null || x === undefined ? "" : valueText(x))).join(",");
  if (v !== null && typeof v === "object") return JSON.stringify(v);
  return String(v);
}
