// A validator of BagIt 1.0 bags (RFC 8493) unpacked in a folder, written from the RFC's
// text for the tests: each check names the section it comes from. It answers the list of
// problems found (empty for a valid bag), so a test can show them all at once.
import { createHash } from "node:crypto";
import { createReadStream, promises as fs } from "node:fs";
import path from "node:path";

export interface BagReport {
  problems: string[];
  /** The payload files found under data/, relative to the bag ("data/…"). */
  payload: string[];
  /** bag-info.txt's fields, in order (a label may repeat). */
  info: [string, string][];
  manifests: Record<string, Map<string, string>>;
}

/** Digest lengths in hex of the algorithms RFC 8493 §2.4 names (and the tests meet). */
const hexLength: Record<string, number> = { md5: 32, sha1: 40, sha256: 64, sha512: 128 };

async function walk(dir: string, base: string, out: string[] = []): Promise<string[]> {
  for (const e of await fs.readdir(dir, { withFileTypes: true })) {
    const full = path.join(dir, e.name);
    const rel = path.posix.join(base, e.name);
    if (e.isDirectory()) await walk(full, rel, out);
    else out.push(rel);
  }
  return out;
}

async function digestOf(file: string, alg: string): Promise<string> {
  const h = createHash(alg);
  for await (const chunk of createReadStream(file)) h.update(chunk as Buffer);
  return h.digest("hex");
}

/**
 * Reads a tag file as RFC 8493 requires of every tag file it defines: UTF-8 (§2.1.1
 * bagit.txt; §2.2 "Tag-File-Character-Encoding" for the others, here UTF-8), no byte-order
 * mark in bagit.txt (§2.1.1), lines ended by LF, CR LF or CR (§2.1.1, §2.1.3, §2.2.1, §2.2.2),
 * the same ending throughout, and a last line that is ended too. Answers its lines.
 */
async function tagLines(bag: string, name: string, problems: string[]): Promise<string[] | null> {
  let raw: Buffer;
  try {
    raw = await fs.readFile(path.join(bag, name));
  } catch {
    return null;
  }
  let text: string;
  try {
    text = new TextDecoder("utf-8", { fatal: true, ignoreBOM: true }).decode(raw);
  } catch {
    problems.push(`§2.2 ${name} is not valid UTF-8`);
    return [];
  }
  if (text.startsWith("\uFEFF")) problems.push(`§2.1.1 ${name} begins with a byte-order mark`);
  if (text.length && !/[\r\n]$/.test(text))
    problems.push(`§2.1.1/§2.1.3 the last line of ${name} has no line ending`);
  const endings = new Set(text.match(/\r\n|\r|\n/g) ?? []);
  if (endings.size > 1)
    problems.push(
      `§2.1.3 ${name} mixes line endings (${[...endings].map((e) => JSON.stringify(e)).join(", ")})`,
    );
  return text.split(/\r\n|\r|\n/).slice(0, -1);
}

/** RFC 8493 §2.1.3: a path in a manifest is percent-decoded for %25, %0A and %0D only. */
function decodePath(p: string): string {
  return p.replace(/%0A/gi, "\n").replace(/%0D/gi, "\r").replace(/%25/g, "%");
}

/** Reads a manifest's lines (§2.1.3 payload manifests, §2.2.1 tag manifests): "checksum  filepath". */
async function readManifest(
  bag: string,
  name: string,
  alg: string,
  problems: string[],
): Promise<Map<string, string>> {
  const out = new Map<string, string>();
  const lines = (await tagLines(bag, name, problems)) ?? [];
  lines.forEach((line, i) => {
    // §2.1.3: "checksum filepath", separated by one or more linear whitespace characters.
    const m = /^([0-9A-Fa-f]+)[ \t]+(\S.*)$/.exec(line);
    if (!m) {
      problems.push(`§2.1.3 ${name} line ${i + 1} is not "checksum filepath": ${JSON.stringify(line)}`);
      return;
    }
    const [, digest, rawPath] = m;
    if (hexLength[alg] && digest.length !== hexLength[alg])
      problems.push(
        `§2.1.3 ${name} line ${i + 1}: a ${alg} checksum has ${hexLength[alg]} hex digits, not ${digest.length}`,
      );
    const p = decodePath(rawPath);
    // §2.1.3: relative to the base directory, "/" separators, no "." or ".." segments, not absolute.
    if (
      p.startsWith("/") ||
      p.includes("\\") ||
      p.split("/").some((s) => s === "." || s === ".." || s === "")
    )
      problems.push(`§2.1.3 ${name} line ${i + 1}: ${JSON.stringify(p)} is not a plain relative path`);
    if (out.has(p)) problems.push(`§2.1.3 ${name} lists ${p} twice`);
    out.set(p, digest.toLowerCase());
  });
  return out;
}

/** Checks every rule of RFC 8493 that applies to the bag unpacked at `bag` (its base directory). */
export async function validateBag(bag: string): Promise<BagReport> {
  const problems: string[] = [];
  const top = await fs.readdir(bag);

  // §2.1.1 bagit.txt: required, exactly the version and encoding lines, in that order.
  const declaration = await tagLines(bag, "bagit.txt", problems);
  if (!declaration) problems.push("§2.1.1 / §3 bagit.txt is missing");
  else {
    if (declaration.length !== 2) problems.push(`§2.1.1 bagit.txt has ${declaration.length} lines, not 2`);
    if (!/^BagIt-Version: [0-9]+\.[0-9]+$/.test(declaration[0] ?? ""))
      problems.push(
        `§2.1.1 bagit.txt's first line is not "BagIt-Version: M.N": ${JSON.stringify(declaration[0])}`,
      );
    else if (declaration[0] !== "BagIt-Version: 1.0")
      problems.push(`§2.1.1 not a BagIt 1.0 bag: ${declaration[0]}`);
    if (declaration[1] !== "Tag-File-Character-Encoding: UTF-8")
      problems.push(
        `§2.1.1 bagit.txt's second line is not "Tag-File-Character-Encoding: UTF-8": ${JSON.stringify(declaration[1])}`,
      );
  }

  // §2.1.2 the payload directory: required, named data.
  const hasData = await fs
    .stat(path.join(bag, "data"))
    .then((s) => s.isDirectory())
    .catch(() => false);
  if (!hasData) problems.push("§2.1.2 / §3 the payload directory data/ is missing");
  const payload = hasData ? (await walk(path.join(bag, "data"), "data")).sort() : [];

  // §2.1.3 payload manifests: at least one; §2.2.1 tag manifests.
  const manifestNames = top.filter((f) => /^manifest-[a-z0-9]+\.txt$/.test(f)).sort();
  const tagManifestNames = top.filter((f) => /^tagmanifest-[a-z0-9]+\.txt$/.test(f)).sort();
  if (!manifestNames.length)
    problems.push("§2.1.3 / §3 there is no payload manifest (manifest-<algorithm>.txt)");
  const manifests: Record<string, Map<string, string>> = {};
  for (const name of manifestNames) {
    const alg = /^manifest-(.+)\.txt$/.exec(name)![1];
    const m = await readManifest(bag, name, alg, problems);
    manifests[alg] = m;
    const listed = new Set(m.keys());
    for (const p of listed) {
      // §2.1.3: a payload manifest lists payload files only.
      if (!p.startsWith("data/")) problems.push(`§2.1.3 ${name} lists ${p}, which is not under data/`);
      // §3: every file listed in every payload manifest is present ...
      else if (!payload.includes(p)) problems.push(`§3 ${name} lists ${p}, which is not in the bag`);
      // ... and (§3, BagIt 1.0) every checksum verifies.
      else if ((await digestOf(path.join(bag, p), alg)) !== m.get(p))
        problems.push(`§3 ${p} does not match its ${alg} checksum in ${name}`);
    }
    // §3 (BagIt 1.0): every payload file is listed in every payload manifest.
    for (const p of payload) if (!listed.has(p)) problems.push(`§3 ${p} is missing from ${name}`);
  }
  // §2.4: a bag's manifests use the same set of algorithms for tag manifests as for payload manifests (SHOULD).
  for (const name of tagManifestNames) {
    const alg = /^tagmanifest-(.+)\.txt$/.exec(name)![1];
    const m = await readManifest(bag, name, alg, problems);
    for (const [p, digest] of m) {
      // §2.2.1: a tag manifest lists tag files only, never payload files, never a tag manifest.
      if (p.startsWith("data/")) problems.push(`§2.2.1 ${name} lists the payload file ${p}`);
      else if (/^tagmanifest-/.test(p)) problems.push(`§2.2.1 ${name} lists the tag manifest ${p}`);
      else if (!(await fs.stat(path.join(bag, p)).catch(() => null)))
        problems.push(`§3 ${name} lists ${p}, which is not in the bag`);
      else if ((await digestOf(path.join(bag, p), alg)) !== digest)
        problems.push(`§3 ${p} does not match its ${alg} checksum in ${name}`);
    }
    // §2.2.1: a tag manifest SHOULD list every tag file (bagit.txt, bag-info.txt, the payload manifests).
    for (const f of top.filter((f) => f !== "data" && !/^tagmanifest-/.test(f)))
      if (!m.has(f)) problems.push(`§2.2.1 ${name} does not list the tag file ${f}`);
  }

  // §2.2.2 bag-info.txt: "Label: value" lines; a line that begins with whitespace continues the one before.
  const info: [string, string][] = [];
  const infoLines = await tagLines(bag, "bag-info.txt", problems);
  if (infoLines) {
    infoLines.forEach((line, i) => {
      if (/^[ \t]/.test(line) && info.length) {
        info[info.length - 1][1] += ` ${line.trim()}`;
        return;
      }
      const m = /^([^:\s][^:]*?)[ \t]*:[ \t]*(.*)$/.exec(line);
      if (!m)
        problems.push(`§2.2.2 bag-info.txt line ${i + 1} is not "Label: value": ${JSON.stringify(line)}`);
      else info.push([m[1], m[2]]);
    });
    const one = (label: string) => info.filter(([k]) => k === label).map(([, v]) => v);
    // §2.2.2: these labels are not repeatable.
    for (const label of ["Bagging-Date", "Bag-Size", "Payload-Oxum", "Bag-Group-Identifier", "Bag-Count"])
      if (one(label).length > 1) problems.push(`§2.2.2 bag-info.txt repeats ${label}`);
    const oxum = one("Payload-Oxum")[0];
    if (oxum !== undefined) {
      // §2.2.2 Payload-Oxum: "OctetCount.StreamCount" of the payload.
      let octets = 0;
      for (const p of payload) octets += (await fs.stat(path.join(bag, p))).size;
      if (oxum !== `${octets}.${payload.length}`)
        problems.push(`§2.2.2 Payload-Oxum says ${oxum}, the payload is ${octets}.${payload.length}`);
    }
    const date = one("Bagging-Date")[0];
    if (date !== undefined && !/^\d{4}-\d{2}-\d{2}$/.test(date))
      problems.push(`§2.2.2 Bagging-Date is not YYYY-MM-DD: ${date}`);
  }

  // §2.2.3 fetch.txt: none here; a bag that had one would be incomplete until fetched.
  if (top.includes("fetch.txt"))
    problems.push("§2.2.3 the bag has a fetch.txt: it is not complete as delivered");
  return { problems, payload, info, manifests };
}
