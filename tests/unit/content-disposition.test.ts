import { describe, expect, it } from "vitest";
import { attachmentDisposition } from "@/lib/http/content-disposition";

/** The parameters as a browser reads them: the quoted ASCII name and the decoded UTF-8 one. */
function parse(value: string) {
  const m = /^attachment; filename="([^"\\]*)"; filename\*=UTF-8''([A-Za-z0-9!#$&+\-.^_`|~%]*)$/.exec(value);
  if (!m) throw new Error(`not a well-formed disposition: ${value}`);
  return { ascii: m[1], unicode: decodeURIComponent(m[2]) };
}

describe("download names from stored text", () => {
  it("keeps an ordinary name as it is", () => {
    expect(parse(attachmentDisposition("VB-2211-A-access.wav"))).toEqual({
      ascii: "VB-2211-A-access.wav",
      unicode: "VB-2211-A-access.wav",
    });
  });

  it("cannot split the header or close the quoted name: CR LF, quotes, backslashes and semicolons", () => {
    const value = attachmentDisposition('SM-1\r\nSet-Cookie: x=1; "evil".exe\\..\\-A-access.wav');
    expect(value).not.toMatch(/[\r\n\u0000-\u001f\u007f]/);
    const { ascii, unicode } = parse(value);
    expect(ascii).not.toMatch(/["\\;%]/);
    expect(unicode).not.toMatch(/[\r\n\\/]/);
    expect(unicode).toContain('"evil".exe');
    expect(unicode.endsWith("-A-access.wav")).toBe(true);
  });

  it("gives accented and non-Latin names in full through filename*, with a faithful ASCII fallback", () => {
    expect(parse(attachmentDisposition("Pathé 1234 — Côté A.wav"))).toEqual({
      ascii: "Pathe 1234 _ Cote A.wav",
      unicode: "Pathé 1234 — Côté A.wav",
    });
    const greek = parse(attachmentDisposition("Ωδή-Α.wav", "transfer.wav"));
    expect(greek.unicode).toBe("Ωδή-Α.wav");
    expect(greek.ascii).toMatch(/^[ -~]+$/);
  });

  it("drops paths and leading dots, and falls back when nothing printable is left", () => {
    expect(parse(attachmentDisposition("../../etc/passwd")).unicode).not.toMatch(/\//);
    expect(parse(attachmentDisposition("\r\n\t", "transfer.wav"))).toEqual({
      ascii: "transfer.wav",
      unicode: "transfer.wav",
    });
    expect(parse(attachmentDisposition("\uD800lone.wav")).unicode).toBe("\uFFFDlone.wav");
  });

  it("shortens a very long name but keeps its extension", () => {
    const { unicode, ascii } = parse(attachmentDisposition(`${"é".repeat(400)}.wav`));
    expect(Array.from(unicode)).toHaveLength(150);
    expect(unicode.endsWith(".wav")).toBe(true);
    expect(ascii.endsWith(".wav")).toBe(true);
  });
});
