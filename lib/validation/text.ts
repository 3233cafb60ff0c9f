import "./zod-setup";
import { z } from "zod";
import { AppError } from "../http/errors";

// Text the lab's records cannot hold. PostgreSQL refuses the NUL character (U+0000) in
// text columns (the insert fails with "invalid byte sequence"), and half of a surrogate
// pair is not a character at all: the database driver would quietly turn it into U+FFFD.
// Both are refused where they come in, with a field error, instead of answering 500 or
// storing something other than what was sent.

/** What a person sees for a file of no bytes at all, whichever page it was sent from. */
export const emptyFileMessage = "The file is empty (0 bytes).";

export const badTextMessage =
  "This text holds a NUL character (U+0000) or a broken Unicode character: remove it.";

const loneSurrogate = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

export function isBadText(s: string): boolean {
  return s.includes("\u0000") || loneSurrogate.test(s);
}

/**
 * Every place in a value (a parsed JSON body, query parameters, form values) whose text is
 * bad, as dotted paths like zod's ("sides.0.title"); a bad key counts as its own place.
 */
export function findBadText(value: unknown, path: (string | number)[] = [], out: string[] = []): string[] {
  const here = () => (path.length ? path.join(".") : "_");
  if (typeof value === "string") {
    if (isBadText(value)) out.push(here());
  } else if (Array.isArray(value)) {
    value.forEach((v, i) => findBadText(v, [...path, i], out));
  } else if (value !== null && typeof value === "object") {
    for (const [k, v] of Object.entries(value)) {
      if (isBadText(k)) out.push(here());
      else findBadText(v, [...path, k], out);
    }
  }
  return out;
}

/** Throws a 422 with a field error for every place that holds bad text. */
export function refuseBadText(value: unknown): void {
  const places = findBadText(value);
  if (places.length === 0) return;
  const fields: Record<string, string[]> = {};
  for (const p of places) fields[p] = [badTextMessage];
  throw new AppError("invalid", 422, "Some fields hold characters the record cannot keep.", fields);
}

/** A zod string that refuses bad text: for the schemas of inputs that do not come through route(). */
export const cleanString = () => z.string().refine((s) => !isBadText(s), badTextMessage);
