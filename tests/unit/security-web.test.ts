// The pure pieces of the web hardening: where a request comes from, where sign-in may send
// a person, what the Outbox shows of single-use links, PREMIS for any stored text, the CSP.
import { execFile } from "node:child_process";
import { mkdtemp, writeFile } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import { describe, expect, it } from "vitest";
import { bucketOrigins, pagePolicy } from "@/lib/http/csp";
import { safeNextPath } from "@/lib/http/next-path";
import { checkSameOrigin } from "@/lib/http/same-origin";
import { premisXml, xmlText } from "@/lib/exports/premis";
import { hiddenToken, redactSingleUseLinks } from "@/lib/mail/redact";
import { passwordResetMail } from "@/lib/mail/templates";
import { findBadText } from "@/lib/validation/text";

const app = "http://127.0.0.1:3100";
const h = (o: Record<string, string>) => new Headers(o);

describe("where a state-changing request comes from", () => {
  it("accepts the app's own Origin, and Sec-Fetch-Site or Referer of the app without one", () => {
    expect(checkSameOrigin(h({ origin: app }), app).ok).toBe(true);
    expect(checkSameOrigin(h({ "sec-fetch-site": "same-origin" }), app).ok).toBe(true);
    expect(checkSameOrigin(h({ referer: `${app}/catalogue/new` }), app).ok).toBe(true);
  });

  it("refuses another origin, another port, 'null', and a cross-site Sec-Fetch-Site or Referer", () => {
    for (const headers of <Record<string, string>[]>[
      { origin: "http://127.0.0.1:3199" },
      { origin: "http://localhost:3100" },
      { origin: "null" },
      { origin: "http://evil.example", referer: `${app}/` },
      { "sec-fetch-site": "same-site" },
      { "sec-fetch-site": "cross-site", referer: `${app}/` },
      { referer: "http://evil.example/127.0.0.1:3100" },
      { referer: "not a url" },
    ]) {
      expect(checkSameOrigin(h(headers), app), JSON.stringify(headers)).toEqual({
        ok: false,
        reason: "cross-site",
      });
    }
  });

  it("refuses a request with none of the three headers", () => {
    expect(checkSameOrigin(h({}), app)).toEqual({ ok: false, reason: "unknown" });
  });
});

describe("sign-in's next", () => {
  it("keeps same-origin paths with their query and fragment", () => {
    expect(safeNextPath("/catalogue?q=Path%C3%A9&page=2#top")).toBe("/catalogue?q=Path%C3%A9&page=2#top");
    expect(safeNextPath("/review/00000000-0000-4000-8000-000000000000")).toBe(
      "/review/00000000-0000-4000-8000-000000000000",
    );
    expect(safeNextPath("/a/../people")).toBe("/people");
  });

  // Each as the page reads it: URLSearchParams has already decoded %5C, %09, %0D%0A once.
  const tricky = [
    "/\\evil.example/x", // /%5Cevil.example/x
    "/\t/evil.example", // /%09/evil.example
    "/\\/evil.example", // /%5C/evil.example
    "//evil.example",
    "///evil.example",
    "https://evil.example",
    "http:evil.example",
    "\\\\evil.example",
    "/\\\\evil",
    "javascript:alert(1)",
    "JaVaScRiPt:alert(1)",
    " /evil",
    "/\r\n/evil.example",
    "/\n/evil.example",
    "/\r//evil.example",
    "/.//evil.example",
    "/./\\evil.example",
    "/%2F%2Fevil.example".replace(/%2F/g, "/"),
    "data:text/html,<script>alert(1)</script>",
    "evil.example",
    "",
    "/\u2028/evil.example",
  ];
  it.each(tricky.map((t) => [JSON.stringify(t), t]))("sends %s home", (_label, next) => {
    expect(safeNextPath(next)).toBe("/");
  });

  it("leaves a doubly encoded path as a path on the app", () => {
    const p = safeNextPath("/%2F%2Fevil.example");
    expect(new URL(p, app).origin).toBe(app);
  });
});

describe("single-use links as the app shows mail", () => {
  it("hides the token of a reset or invitation link and leaves the rest of the text", () => {
    const token = "Ab3_-xYz0123456789abcdefghijklmnopqrstuvwxyzA";
    const mail = passwordResetMail({
      to: "a@lab.example",
      labName: "Lab",
      link: `${app}/reset/${token}`,
      expiresAt: new Date(0),
    });
    const shown = redactSingleUseLinks(mail.text);
    expect(shown).not.toContain(token);
    expect(shown).toContain(`${app}/reset/${hiddenToken}`);
    expect(redactSingleUseLinks(`Open ${app}/invite/${token} now`)).toBe(
      `Open ${app}/invite/${hiddenToken} now`,
    );
    expect(redactSingleUseLinks("Side A of /reset/short is in review.")).toBe(
      "Side A of /reset/short is in review.",
    );
  });
});

describe("PREMIS for any stored text", () => {
  it("writes characters XML 1.0 cannot carry as U+FFFD and keeps the rest", () => {
    expect(xmlText("a\u000bb\u0000c\ud800d\udc00e\ufffef")).toBe("a\ufffdb\ufffdc\ufffdd\ufffde\ufffdf");
    expect(xmlText("Pathé\t😀\n")).toBe("Pathé\t😀\n");
  });

  it("is well-formed XML (xmllint --noout) with U+000B, NUL and lone surrogates in titles", async () => {
    const odd = "Copper\u000b Meadow\u0000 Serenade \ud800 \udfff \u0001 Pathé 😀";
    const xml = premisXml({
      entities: [{ identifier: `VB\u000b1`, type: "Rillbook shelf mark", name: odd }],
      files: [],
      events: [
        {
          id: "e1",
          type: "creation",
          at: "2026-12-03T10:00:00Z",
          detail: odd,
          outcome: "success",
          agent: null,
          objects: [{ type: "t", value: odd }],
        },
      ],
      agents: [{ id: "a1", name: odd, type: "person" }],
    });
    const dir = await mkdtemp(path.join(os.tmpdir(), "rillbook-premis-"));
    const file = path.join(dir, "odd.xml");
    await writeFile(file, xml, "utf8");
    const { stderr } = await promisify(execFile)("xmllint", ["--noout", file]);
    expect(stderr).toBe("");
    expect(xml).toContain("Pathé 😀");
  });
});

describe("bad text in inputs", () => {
  it("names every place that holds a NUL or a lone surrogate", () => {
    expect(
      findBadText({ q: "\u0000", sides: [{ title: "ok" }, { title: "a\ud800" }], fine: "Pathé 😀" }),
    ).toEqual(["q", "sides.1.title"]);
  });
});

describe("the Content-Security-Policy", () => {
  const bucket = bucketOrigins({
    s3Endpoint: "http://127.0.0.1:54321",
    bucket: "rillbook",
    forcePathStyle: true,
  });
  it("lets scripts run only with the nonce, lets the bucket in for uploads and playback, and forbids framing", () => {
    const p = pagePolicy({ nonce: "abc", development: false, bucketOrigins: bucket, https: false });
    expect(p).toContain("script-src 'self' 'nonce-abc' 'strict-dynamic' 'wasm-unsafe-eval';");
    expect(p).not.toContain("'unsafe-eval'");
    expect(p).toContain("connect-src 'self' http://127.0.0.1:54321");
    expect(p).toContain("media-src 'self' blob: http://127.0.0.1:54321");
    expect(p).toContain("frame-ancestors 'none'");
    expect(p).not.toContain("upgrade-insecure-requests");
  });

  it("allows eval only in development, and upgrades requests under https", () => {
    expect(pagePolicy({ nonce: "abc", development: true, bucketOrigins: bucket, https: true })).toMatch(
      /'unsafe-eval'.*upgrade-insecure-requests/,
    );
    expect(
      bucketOrigins({ s3Endpoint: "https://s3.example.org", bucket: "lab", forcePathStyle: false }),
    ).toEqual(["https://s3.example.org", "https://lab.s3.example.org"]);
  });
});
