/**
 * A `Content-Disposition: attachment` value for a download named from stored text (a
 * shelf mark, a file name as an engineer's computer gave it), safe whatever that text
 * holds: control characters (CR LF would split the header), quotes, backslashes, path
 * separators, accents and other scripts.
 *
 * RFC 6266 §4.3 and appendix D: a `filename` parameter in plain ASCII for every
 * recipient, then `filename*` (RFC 8187, formerly RFC 5987) with the full name in
 * UTF-8, which browsers prefer when they understand it.
 */
export function attachmentDisposition(name: string, fallback = "download"): string {
  const unicode = limitLength(readable(name), 150) || fallback;
  const ascii = asciiFallback(unicode) || asciiFallback(fallback) || "download";
  return `attachment; filename="${ascii}"; filename*=UTF-8''${encodeExtValue(unicode)}`;
}

/** The name as one line of text: no control or separator characters, no path, no lone surrogates. */
function readable(name: string): string {
  return name
    .replace(/[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g, "\uFFFD")
    .normalize("NFC")
    .replace(/[\u0000-\u001f\u007f-\u009f\u2028\u2029]+/g, " ")
    .replace(/[\\/]+/g, "_")
    .replace(/\s+/g, " ")
    .trim()
    .replace(/^\.+/, "");
}

/** At most `max` characters (code points), keeping a short extension such as ".wav". */
function limitLength(name: string, max: number): string {
  const chars = Array.from(name);
  if (chars.length <= max) return name;
  const dot = name.lastIndexOf(".");
  const ext = dot > 0 && name.length - dot <= 10 ? name.slice(dot) : "";
  return (
    Array.from(name.slice(0, name.length - ext.length))
      .slice(0, max - Array.from(ext).length)
      .join("")
      .trimEnd() + ext
  ).trim();
}

/**
 * Plain ASCII for the `filename` parameter: accents dropped by compatibility
 * decomposition ("Pathé" → "Pathe"), anything else outside a conservative set becomes
 * "_" (no quote, backslash or "%", which some browsers would decode).
 */
function asciiFallback(name: string): string {
  return name
    .normalize("NFKD")
    .replace(/\p{M}+/gu, "")
    .replace(/[^A-Za-z0-9 ._()+,=@-]+/g, "_")
    .replace(/_{2,}/g, "_")
    .replace(/^[ ._]+/, "")
    .trim()
    .replace(/^_+$/, "");
}

/** RFC 8187 §3.2.1 ext-value: UTF-8 bytes, percent-encoded except attr-char. */
function encodeExtValue(name: string): string {
  return encodeURIComponent(name).replace(/['()*]/g, (c) => `%${c.charCodeAt(0).toString(16).toUpperCase()}`);
}
