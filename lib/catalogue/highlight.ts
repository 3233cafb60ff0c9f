// Which parts of a text a catalogue search matched, so the table can mark them. Pure:
// the browser uses it to draw, the tests to prove it. It follows the list query
// (lib/catalogue/list-query.ts): words through PostgreSQL's websearch_to_tsquery on a
// 'simple' tsvector (whole words, any case; quoted phrases are their words; a word after
// "-" is excluded, "or" joins), and the whole search as a substring of the numbers.

export interface SearchTerms {
  /** Whole words that count as matches, lower-cased. */
  words: string[];
  /** The search as typed (trimmed, lower-cased): matched anywhere, as the number search does. */
  phrase: string;
}

const wordPattern = /[\p{L}\p{N}]+/gu;

export function searchTerms(q: string): SearchTerms {
  const words = new Set<string>();
  // Drop excluded words ("-word", "-\"a phrase\"") before taking the rest word by word.
  const kept = q.replace(/(^|\s)-("[^"]*"?|\S+)/g, " ");
  for (const m of kept.matchAll(wordPattern)) {
    const w = m[0].toLowerCase();
    if (w !== "or") words.add(w);
  }
  return { words: [...words], phrase: q.trim().toLowerCase() };
}

export interface TextPart {
  text: string;
  match: boolean;
}

/**
 * Splits `text` into runs that matched the search and runs that did not, in order.
 * `numbers`: the text is a shelf mark, catalogue or matrix number, which the search also
 * finds by substring; titles and performers are found by whole words only.
 */
export function highlightParts(
  text: string,
  terms: SearchTerms,
  { numbers = false }: { numbers?: boolean } = {},
): TextPart[] {
  if (!text) return [];
  const lower = text.toLowerCase();
  const hits: [number, number][] = [];
  for (const m of text.matchAll(wordPattern)) {
    if (terms.words.includes(m[0].toLowerCase())) hits.push([m.index, m.index + m[0].length]);
  }
  if (numbers && terms.phrase.length >= 2) {
    for (let at = lower.indexOf(terms.phrase); at >= 0; at = lower.indexOf(terms.phrase, at + 1))
      hits.push([at, at + terms.phrase.length]);
  }
  if (!hits.length) return [{ text, match: false }];
  hits.sort((a, b) => a[0] - b[0]);
  const merged: [number, number][] = [];
  for (const h of hits) {
    const last = merged[merged.length - 1];
    if (last && h[0] <= last[1]) last[1] = Math.max(last[1], h[1]);
    else merged.push([...h]);
  }
  const parts: TextPart[] = [];
  let pos = 0;
  for (const [from, to] of merged) {
    if (from > pos) parts.push({ text: text.slice(pos, from), match: false });
    parts.push({ text: text.slice(from, to), match: true });
    pos = to;
  }
  if (pos < text.length) parts.push({ text: text.slice(pos), match: false });
  return parts;
}
