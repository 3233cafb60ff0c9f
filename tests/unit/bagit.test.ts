// The BagIt tag files (lib/exports/bagit.ts) and the test suite's validator
// (tests/support/bagit.ts): a small bag made with the same functions the packager uses
// validates clean, and each RFC 8493 rule broken on purpose is reported under its section,
// so the integration tests' "no problems" means something.
import { createHash } from "node:crypto";
import { promises as fs } from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import { bagInfoText, bagitTxt, bagSize, manifestPath, manifestText, payloadOxum } from "@/lib/exports/bagit";
import { validateBag } from "../support/bagit";

let bag: string;
const files: Record<string, string> = {
  "data/record.json": '{"disc":"MH-0001"}\n',
  "data/access/MH-0001-A-access.wav": "RIFF....WAVEfmt ",
  "data/labels/MH-0001 side%A.png": "\x89PNG\r\n\x1a\n",
};
const digest = (alg: string, text: string) => createHash(alg).update(text).digest("hex");

async function write(p: string, text: string) {
  await fs.mkdir(path.dirname(path.join(bag, p)), { recursive: true });
  await fs.writeFile(path.join(bag, p), text);
}

async function tagmanifest() {
  const tags = ["bagit.txt", "bag-info.txt", "manifest-sha256.txt", "manifest-sha512.txt"];
  const lines = [];
  for (const t of tags)
    lines.push({ path: t, digest: digest("sha256", await fs.readFile(path.join(bag, t), "utf8")) });
  await write("tagmanifest-sha256.txt", manifestText(lines));
}

beforeEach(async () => {
  bag = await fs.mkdtemp(path.join(os.tmpdir(), "rillbook-bagit-unit-"));
  for (const [p, t] of Object.entries(files)) await write(p, t);
  const entries = Object.entries(files);
  await write("bagit.txt", bagitTxt);
  await write(
    "manifest-sha256.txt",
    manifestText(entries.map(([p, t]) => ({ path: p, digest: digest("sha256", t) }))),
  );
  await write(
    "manifest-sha512.txt",
    manifestText(entries.map(([p, t]) => ({ path: p, digest: digest("sha512", t) }))),
  );
  const octets = entries.reduce((n, [, t]) => n + Buffer.byteLength(t), 0);
  await write(
    "bag-info.txt",
    bagInfoText([
      ["Source-Organization", "Marrow Hill Sound Archive"],
      ["Organization-Address", "The Old Pressing Shed\nMarrow Hill"],
      ["Contact-Phone", ""],
      ["Bagging-Date", "2026-12-03"],
      ["Payload-Oxum", payloadOxum(entries.map(([, t]) => ({ bytes: Buffer.byteLength(t) })))],
      ["Bag-Size", bagSize(octets)],
    ]),
  );
  await tagmanifest();
});

afterEach(async () => {
  await fs.rm(bag, { recursive: true, force: true });
});

describe("BagIt tag files", () => {
  it("writes manifest lines sorted by path, with %, CR and LF percent-encoded (RFC 8493 §2.1.3)", () => {
    expect(manifestPath("a%b\nc\rd")).toBe("a%25b%0Ac%0Dd");
    expect(
      manifestText([
        { path: "data/b", digest: "2" },
        { path: "data/a", digest: "1" },
      ]),
    ).toBe("1  data/a\n2  data/b\n");
  });

  it("gives Payload-Oxum as octets.streams and Bag-Size in decimal units (§2.2.2)", () => {
    expect(payloadOxum([{ bytes: 10 }, { bytes: 5 }])).toBe("15.2");
    expect(bagSize(999)).toBe("999 bytes");
    expect(bagSize(52_400_000_000)).toBe("52.4 GB");
    expect(bagSize(1_234_000)).toBe("1.23 MB");
  });

  it("writes bag-info.txt values on one line and leaves out labels with no value (§2.2.2)", () => {
    expect(
      bagInfoText([
        ["Organization-Address", "Shed\r\nHill"],
        ["Contact-Phone", " "],
        ["X", null],
      ]),
    ).toBe("Organization-Address: Shed; Hill\n");
  });
});

describe("the test suite's BagIt validator", () => {
  it("finds nothing wrong with a bag made by the packager's own functions", async () => {
    const report = await validateBag(bag);
    expect(report.problems).toEqual([]);
    expect(report.payload).toHaveLength(3);
    expect(report.manifests.sha256.get("data/labels/MH-0001 side%A.png")).toBe(
      digest("sha256", files["data/labels/MH-0001 side%A.png"]),
    );
  });

  it("reports a payload file missing from a manifest and a listed file that is not there (§3)", async () => {
    await write("data/extra.txt", "not listed\n");
    await fs.rm(path.join(bag, "data/record.json"));
    const { problems } = await validateBag(bag);
    expect(problems).toContain("§3 data/extra.txt is missing from manifest-sha256.txt");
    expect(problems).toContain("§3 manifest-sha512.txt lists data/record.json, which is not in the bag");
    expect(problems.some((p) => p.startsWith("§2.2.2 Payload-Oxum says"))).toBe(true);
  });

  it("reports a payload file whose bytes changed, and a tag file that no longer matches the tagmanifest (§3)", async () => {
    await write("data/record.json", '{"disc":"MH-0002"}\n');
    await write("bag-info.txt", "Source-Organization: Someone else\n");
    const { problems } = await validateBag(bag);
    expect(problems).toContain(
      "§3 data/record.json does not match its sha256 checksum in manifest-sha256.txt",
    );
    expect(problems).toContain(
      "§3 data/record.json does not match its sha512 checksum in manifest-sha512.txt",
    );
    expect(problems).toContain(
      "§3 bag-info.txt does not match its sha256 checksum in tagmanifest-sha256.txt",
    );
  });

  it("reports a wrong bagit.txt, mixed line endings, a malformed manifest line and bad UTF-8 (§2.1.1, §2.1.3, §2.2)", async () => {
    await write("bagit.txt", "\uFEFFBagIt-Version: 0.97\r\nTag-File-Character-Encoding: UTF-8\n");
    await fs.appendFile(path.join(bag, "manifest-sha256.txt"), "not-a-line\n");
    await fs.writeFile(path.join(bag, "bag-info.txt"), Buffer.from([0x41, 0x3a, 0x20, 0xc3, 0x28, 0x0a]));
    const { problems } = await validateBag(bag);
    expect(problems).toContain("§2.1.1 bagit.txt begins with a byte-order mark");
    expect(problems.some((p) => p.startsWith("§2.1.3 bagit.txt mixes line endings"))).toBe(true);
    expect(
      problems.some((p) => p.startsWith('§2.1.3 manifest-sha256.txt line 4 is not "checksum filepath"')),
    ).toBe(true);
    expect(problems).toContain("§2.2 bag-info.txt is not valid UTF-8");
  });

  it("reports a missing bagit.txt, data/ or payload manifest, and a tagmanifest listing a payload file (§2.1, §2.2.1, §3)", async () => {
    await fs.rm(path.join(bag, "bagit.txt"));
    await fs.rm(path.join(bag, "manifest-sha256.txt"));
    await fs.rm(path.join(bag, "manifest-sha512.txt"));
    await fs.appendFile(path.join(bag, "tagmanifest-sha256.txt"), `${"0".repeat(64)}  data/record.json\n`);
    await fs.rm(path.join(bag, "data"), { recursive: true });
    const { problems } = await validateBag(bag);
    expect(problems).toContain("§2.1.1 / §3 bagit.txt is missing");
    expect(problems).toContain("§2.1.2 / §3 the payload directory data/ is missing");
    expect(problems).toContain("§2.1.3 / §3 there is no payload manifest (manifest-<algorithm>.txt)");
    expect(problems).toContain("§2.2.1 tagmanifest-sha256.txt lists the payload file data/record.json");
  });
});
