import { createHash } from "node:crypto";
import { mkdtemp, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import {
  BwfWriter,
  bextAscii,
  bufferSource,
  encodeBext,
  formatCodingHistoryLine,
  parseBext,
  parseCodingHistory,
  readWavHeader,
} from "@/lib/audio";
import type { SampleEncoding } from "@/lib/audio";
import { CORPUS_BEXT, testSignal } from "../support/wav-corpus";

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "rillbook-writer-"));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

function ascii(b: Uint8Array, o: number, n = 4): string {
  return String.fromCharCode(...b.subarray(o, o + n));
}

describe("BwfWriter", () => {
  const cases: [SampleEncoding, 1 | 2][] = [
    [{ format: "pcm", bitsPerSample: 16 }, 2],
    [{ format: "pcm", bitsPerSample: 24 }, 1],
    [{ format: "pcm", bitsPerSample: 32 }, 2],
    [{ format: "float", bitsPerSample: 32 }, 2],
  ];
  it.each(cases)(
    "writes %o × %i channels that wavefile reads back sample for sample",
    async (encoding, channels) => {
      const path = join(dir, `w-${encoding.format}${encoding.bitsPerSample}-${channels}.wav`);
      const values = testSignal(3333, channels, 21, 0.8);
      const writer = await BwfWriter.create(path, {
        sampleRateHz: 96_000,
        channels,
        encoding,
        bext: CORPUS_BEXT,
        dither: false,
      });
      // Uneven pieces: the streaming writer must not care how it is fed.
      for (const [a, b] of [
        [0, 1],
        [1, 1000],
        [1000, 2047],
        [2047, 3333],
      ])
        await writer.write(values.map((v) => v.subarray(a, b)));
      const result = await writer.close();
      const bytes = new Uint8Array(await readFile(path));
      expect(result.bytes).toBe(bytes.length);
      expect(result.container).toBe("RIFF");
      // Source: wavefile (npm) parses fmt and data on its own.
      const wav = new WaveFile(bytes);
      const fmt = wav.fmt as {
        numChannels: number;
        sampleRate: number;
        bitsPerSample: number;
        audioFormat: number;
      };
      expect(fmt.numChannels).toBe(channels);
      expect(fmt.sampleRate).toBe(96_000);
      expect(fmt.bitsPerSample).toBe(encoding.bitsPerSample);
      expect(fmt.audioFormat).toBe(encoding.format === "pcm" ? 1 : 3);
      const got = wav.getSamples(false) as unknown as Float64Array[] | Float64Array;
      const perChannel = channels === 1 ? [got as Float64Array] : (got as Float64Array[]);
      const scale = encoding.format === "pcm" ? 2 ** (encoding.bitsPerSample - 1) : 1;
      for (let c = 0; c < channels; c++) {
        const want =
          encoding.format === "pcm"
            ? Array.from(values[c], (v) => Math.round(v * scale))
            : Array.from(Float32Array.from(values[c]));
        expect(Array.from(perChannel[c])).toEqual(want);
      }
      // Source: wavefile's bext parser (text fields and coding history).
      const b = Object.fromEntries(
        Object.entries(wav.bext as Record<string, unknown>).map(([k, v]) => [
          k,
          typeof v === "string" ? v.replace(/\0+$/, "") : v,
        ]),
      );
      // (wavefile keeps the NUL padding of fixed-length fields; strip it.)
      expect(b.description).toBe(CORPUS_BEXT.description);
      expect(b.originator).toBe(CORPUS_BEXT.originator);
      expect(b.originationDate).toBe(CORPUS_BEXT.originationDate);
      expect(b.codingHistory).toBe(CORPUS_BEXT.codingHistory);
    },
  );

  it("reserves a JUNK chunk first and turns it into ds64 when the file passes the RF64 threshold (EBU Tech 3306)", async () => {
    const values = testSignal(1000, 2, 2, 0.5);
    const small = join(dir, "riff.wav");
    const big = join(dir, "rf64.wav");
    for (const [path, threshold] of [
      [small, undefined],
      [big, 2000],
    ] as const) {
      const w = await BwfWriter.create(path, {
        sampleRateHz: 48_000,
        channels: 2,
        encoding: { format: "pcm", bitsPerSample: 24 },
        rf64ThresholdBytes: threshold,
      });
      await w.write(values);
      await w.close();
    }
    const a = new Uint8Array(await readFile(small));
    const b = new Uint8Array(await readFile(big));
    const va = new DataView(a.buffer);
    const vb = new DataView(b.buffer);
    // Source: EBU Tech 3306 §3–4 layout, read byte by byte here.
    expect(ascii(a, 0)).toBe("RIFF");
    expect(va.getUint32(4, true)).toBe(a.length - 8);
    expect(ascii(a, 12)).toBe("JUNK");
    expect(va.getUint32(16, true)).toBe(28);
    expect(ascii(b, 0)).toBe("RF64");
    expect(vb.getUint32(4, true)).toBe(0xffffffff);
    expect(ascii(b, 12)).toBe("ds64");
    expect(Number(vb.getBigUint64(20, true))).toBe(b.length - 8);
    expect(Number(vb.getBigUint64(28, true))).toBe(6000);
    expect(Number(vb.getBigUint64(36, true))).toBe(1000);
    // Apart from the header patches the two files are the same bytes.
    const h = await readWavHeader(bufferSource(b));
    expect(h.container).toBe("RF64");
    expect(vb.getUint32(h.dataOffset - 4, true)).toBe(0xffffffff);
    expect(a.subarray(h.dataOffset)).toEqual(b.subarray(h.dataOffset));
  });

  it("with the length known in advance, writes the final header at once and hashes the file as it writes", async () => {
    const values = testSignal(1001, 1, 3, 0.5);
    const cases = [
      { name: "known.wav", expectedFrames: 1001, threshold: undefined },
      { name: "known-rf64.wav", expectedFrames: 1001, threshold: 2000 },
      { name: "short.wav", expectedFrames: 1200, threshold: undefined },
      { name: "unknown.wav", expectedFrames: undefined, threshold: undefined },
    ];
    const files: Uint8Array[] = [];
    for (const c of cases) {
      const path = join(dir, c.name);
      const w = await BwfWriter.create(path, {
        sampleRateHz: 48_000,
        channels: 1,
        encoding: { format: "pcm", bitsPerSample: 24 },
        expectedFrames: c.expectedFrames,
        rf64ThresholdBytes: c.threshold,
      });
      await w.write(values.map((v) => v.subarray(0, 500)));
      await w.write(values.map((v) => v.subarray(500)));
      const r = await w.close();
      const bytes = new Uint8Array(await readFile(path));
      files.push(bytes);
      // Source: node:crypto over the finished file on disk.
      const onDisk = createHash("sha256").update(bytes).digest("hex");
      if (c.expectedFrames === 1001) expect(r.sha256).toBe(onDisk);
      else expect(r.sha256).toBeNull(); // the header was patched afterwards: the running hash no longer holds
      const h = await readWavHeader(bufferSource(bytes));
      expect(h.frames).toBe(1001);
      expect(h.container).toBe(c.threshold ? "RF64" : "RIFF");
      expect(r.container).toBe(h.container);
    }
    // A length that was not met is patched to the truth: the same file as one written without a length.
    expect(Buffer.from(files[2]).equals(Buffer.from(files[3]))).toBe(true);
    expect(Buffer.from(files[0]).equals(Buffer.from(files[3]))).toBe(true);
  });

  it("pads an odd-sized data chunk and still reports the true size", async () => {
    const path = join(dir, "odd.wav");
    const w = await BwfWriter.create(path, {
      sampleRateHz: 44_100,
      channels: 1,
      encoding: { format: "pcm", bitsPerSample: 24 },
    });
    await w.write(testSignal(5, 1));
    const r = await w.close();
    const bytes = new Uint8Array(await readFile(path));
    expect(r.dataBytes).toBe(15);
    expect(bytes.length).toBe(r.dataOffset + 16);
    expect(bytes.length % 2).toBe(0);
    const h = await readWavHeader(bufferSource(bytes));
    expect(h.dataBytes).toBe(15);
    expect(h.frames).toBe(5);
  });
});

describe("bext and coding history", () => {
  it("round-trips every field through the Tech 3285 v2 layout", () => {
    const body = encodeBext(CORPUS_BEXT);
    expect(body.length).toBe(
      602 + CORPUS_BEXT.codingHistory!.length + ((602 + CORPUS_BEXT.codingHistory!.length) & 1),
    );
    // Fixed offsets from EBU Tech 3285 v2, read directly.
    expect(ascii(body, 320, 10)).toBe("2026-03-14");
    expect(ascii(body, 330, 8)).toBe("09:26:53");
    const v = new DataView(body.buffer);
    expect(v.getUint32(338, true) + v.getUint32(342, true) * 2 ** 32).toBe(5_000_000_123);
    expect(v.getUint16(346, true)).toBe(2);
    expect(v.getInt16(412, true)).toBe(-2350);
    expect(parseBext(body)).toEqual({ ...CORPUS_BEXT });
  });

  it("writes any name in the free-text fields as faithful ASCII cut to the field, and refuses a malformed date", () => {
    const body = encodeBext({
      description: "Pathé Frères, Łódź: Straße der Nørre Æbelø — «Œuvres» 33⅓",
      originator: "x".repeat(40),
      originatorReference: "Ærø\u0000\u000b",
    });
    const read = parseBext(body);
    expect(read.description).toBe('Pathe Freres, Lodz: Strasse der Norre AEbelo - "OEuvres" 331/3');
    expect(read.originator).toBe("x".repeat(32));
    expect(read.originatorReference).toBe("AEro");
    // Every byte of the 602-byte fixed part's text fields is ASCII (Tech 3285).
    expect(body.subarray(0, 320).every((b) => b < 0x80)).toBe(true);
    expect(bextAscii("Дом 東京")).toBe("??? ??");
    expect(() => encodeBext({ originationDate: "14/03/2026" })).toThrow(/yyyy-mm-dd/);
  });

  it("writes a coding history with accents as ASCII and sizes the chunk by what it wrote", () => {
    const body = encodeBext({ codingHistory: "A=ANALOGUE,M=mono,T=Pathé 78\r\n" });
    expect(parseBext(body).codingHistory).toBe("A=ANALOGUE,M=mono,T=Pathe 78\r\n");
    expect(body.length).toBe(602 + 30);
  });

  it("formats EBU R98 lines and parses them back", () => {
    const line = formatCodingHistoryLine({
      algorithm: "PCM",
      samplingHz: 96_000,
      wordLength: 24,
      mode: "stereo",
      text: "Rillbook 0.1.0, turnover 318 µs",
    });
    // Source: EBU R98 syntax (A=, F=, W=, M=, T=; comma separated; CR/LF terminated).
    expect(line).toBe("A=PCM,F=96000,W=24,M=stereo,T=Rillbook 0.1.0; turnover 318 us\r\n");
    expect(parseCodingHistory(CORPUS_BEXT.codingHistory! + line)).toEqual([
      { algorithm: "ANALOGUE", mode: "mono", text: "corpus turntable; 3.5 mil stylus" },
      { algorithm: "PCM", samplingHz: 96_000, wordLength: 24, mode: "stereo", text: "corpus converter" },
      {
        algorithm: "PCM",
        samplingHz: 96_000,
        wordLength: 24,
        mode: "stereo",
        text: "Rillbook 0.1.0; turnover 318 us",
      },
    ]);
  });
});

describe("the full Unicode text beside the ASCII bext", () => {
  it("writes an iXML chunk in UTF-8 that general-purpose readers parse, with the samples where they were", async () => {
    const path = join(dir, "unicode-text.wav");
    const note = "MH-D00007 side A: Pathé Frères Ø 1207 — “Łódź” <take 2> & co. Equalized access copy.";
    const values = testSignal(2000, 2, 5, 0.5);
    const writer = await BwfWriter.create(path, {
      sampleRateHz: 48_000,
      channels: 2,
      encoding: { format: "pcm", bitsPerSample: 24 },
      bext: { description: note, originator: "Marrow Hill Sound Archive" },
      unicodeText: { project: "Marrow Hill Sound Archive", note },
      dither: false,
    });
    await writer.write(values);
    await writer.close();
    const bytes = new Uint8Array(await readFile(path));
    // Source: wavefile (npm) reads the iXML chunk and the bext chunk on its own.
    const wav = new WaveFile(bytes);
    const ixml = (wav as unknown as { getiXML(): string }).getiXML();
    expect(ixml).toContain(
      "<NOTE>MH-D00007 side A: Pathé Frères Ø 1207 — “Łódź” &lt;take 2&gt; &amp; co. Equalized access copy.</NOTE>",
    );
    expect(ixml).toContain("<PROJECT>Marrow Hill Sound Archive</PROJECT>");
    // The bext description stays ASCII, transliterated (EBU Tech 3285 text fields are ASCII).
    const description = String((wav.bext as Record<string, unknown>).description).replace(/\0+$/, "");
    expect(description).toMatch(/^MH-D00007 side A: Pathe Freres O 1207/);
    expect(/^[\x20-\x7e]*$/.test(description)).toBe(true);
    // The samples are unchanged by the extra chunk.
    const samples = wav.getSamples(false) as unknown as Float64Array[];
    expect(Array.from(samples[0].subarray(0, 50))).toEqual(
      Array.from(values[0].subarray(0, 50), (v) => Math.round(v * 2 ** 23)),
    );
    // Our own reader skips it and finds the data.
    const header = await readWavHeader(bufferSource(bytes));
    expect(header.frames).toBe(2000);
    expect(ascii(bytes, 12)).toBe("JUNK");
  });
});
