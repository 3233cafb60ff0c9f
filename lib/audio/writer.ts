/**
 * Streaming Broadcast WAVE writer with bounded memory: chunks of samples are
 * encoded and appended as they come, and the sizes are patched on close.
 *
 * File layout (EBU Tech 3285 for bext, EBU Tech 3306 for the RF64 switch):
 *
 *   RIFF <size> WAVE
 *   JUNK <28>   reserved room for a ds64 chunk
 *   bext <602 + coding history>
 *   fmt  <16>   WAVE_FORMAT_PCM          (18 with cbSize = 0 for IEEE float)
 *   fact <4>    float only: sample frames (required for non-PCM formats)
 *   data <size> samples
 *
 * On close, if the file has outgrown 32-bit RIFF sizes (4 GiB), Tech 3306 §4
 * applies: "RIFF" becomes "RF64", the JUNK chunk becomes "ds64" carrying the
 * 64-bit RIFF size, data size and sample count, and the 32-bit RIFF and data
 * (and fact) size fields are set to 0xFFFFFFFF. Below 4 GiB it stays a plain
 * RIFF/BWF file that every reader opens; the JUNK chunk is ignored by readers.
 *
 * Plain WAVE_FORMAT_PCM (not EXTENSIBLE) is written at every word length
 * because Tech 3285 specifies WAVE_FORMAT_PCM for BWF linear PCM.
 *
 * When the caller knows the length in advance (`expectedFrames`), the header is
 * written with its final sizes at once and the file's SHA-256 is computed as it
 * is written, so nobody has to read the file again to fingerprint it.
 */
import { createHash } from "node:crypto";
import type { Hash } from "node:crypto";
import { open } from "node:fs/promises";
import type { FileHandle } from "node:fs/promises";
import { bextCodingHistory, encodeBext } from "./bext";
import type { BextInput } from "./bext";
import { encodeInterleavedFloat, interleave, TpdfDither } from "./codecs";
import type { SampleEncoding } from "./codecs";
import { defaultDsp } from "./dsp";
import type { DspEngine } from "./dsp";
import { WAVE_FORMAT_IEEE_FLOAT, WAVE_FORMAT_PCM } from "./header";

const U32_MAX = 0xffffffff;
const DS64_BODY = 28;
/** Coalesce small writes: encoded bytes are flushed to the file in pieces of about this size. */
const WRITE_BUFFER_BYTES = 1 << 20;

export interface BwfWriterOptions {
  sampleRateHz: number;
  channels: 1 | 2;
  encoding: SampleEncoding;
  /** bext fields; a bext chunk is always written (empty fields when absent). */
  bext?: BextInput;
  /**
   * Text in full Unicode that the bext chunk can carry only as ASCII (the bext fields are
   * ASCII: EBU Tech 3285), written as an iXML chunk (UTF-8 XML, the iXML specification's
   * PROJECT and NOTE fields) beside it.
   */
  unicodeText?: { project?: string; note: string };
  /** TPDF dither for integer output (default true). */
  dither?: boolean;
  /** Seed of the dither generator (default fixed), so renders reproduce byte for byte. */
  ditherSeed?: number;
  /**
   * RIFF size above which the file is closed as RF64. Default 0xFFFFFFFF (the
   * 32-bit limit). Tests lower it to exercise the RF64 path on a small file.
   */
  rf64ThresholdBytes?: number;
  /** Engine of the PCM encoder (lib/audio/dsp.ts); default the native one where built. */
  dsp?: DspEngine;
  /**
   * The number of frames that will be written, when known: the header then carries its
   * final sizes from the start and close() returns the file's SHA-256.
   */
  expectedFrames?: number;
  /** fsync on close (default true). A temporary file that is copied elsewhere can skip it. */
  sync?: boolean;
}

export interface BwfWriteResult {
  path: string;
  container: "RIFF" | "RF64";
  frames: number;
  bytes: number;
  dataOffset: number;
  dataBytes: number;
  clippedSamples: number;
  /** SHA-256 of the whole file, when `expectedFrames` was given and met; else null. */
  sha256: string | null;
}

/** Characters XML 1.0 cannot carry (C0 controls but tab and line ends, lone surrogates, U+FFFE/U+FFFF) become U+FFFD. */
function xmlEscape(text: string): string {
  return text
    .replace(
      /[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g,
      "\uFFFD",
    )
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;");
}

/** A minimal iXML document (UTF-8): the project and a note, in full Unicode. */
export function ixmlDocument(text: { project?: string; note: string }): string {
  return [
    '<?xml version="1.0" encoding="UTF-8"?>',
    "<BWFXML>",
    "<IXML_VERSION>2.10</IXML_VERSION>",
    ...(text.project ? [`<PROJECT>${xmlEscape(text.project)}</PROJECT>`] : []),
    `<NOTE>${xmlEscape(text.note)}</NOTE>`,
    "</BWFXML>",
    "",
  ].join("\n");
}

function chunkHeader(id: string, size: number): Uint8Array {
  const b = new Uint8Array(8);
  for (let i = 0; i < 4; i++) b[i] = id.charCodeAt(i);
  new DataView(b.buffer).setUint32(4, size, true);
  return b;
}

function u32(v: number): Uint8Array {
  const b = new Uint8Array(4);
  new DataView(b.buffer).setUint32(0, v, true);
  return b;
}

interface Layout {
  dataSizeAt: number;
  factAt: number | null;
  dataOffset: number;
  blockAlign: number;
}

/**
 * The size fields of a file holding `frames` frames, as byte patches: RIFF with
 * 32-bit sizes, or RF64 (Tech 3306 §4) once the RIFF size passes `threshold`.
 */
function sizePatches(layout: Layout, frames: number, threshold: number): { at: number; bytes: Uint8Array }[] {
  const dataBytes = frames * layout.blockAlign;
  const riffSize = layout.dataOffset + dataBytes + (dataBytes & 1) - 8;
  if (riffSize > threshold) {
    const head = new Uint8Array(12 + 8 + DS64_BODY);
    const v = new DataView(head.buffer);
    head.set([0x52, 0x46, 0x36, 0x34], 0); // "RF64"
    v.setUint32(4, U32_MAX, true);
    head.set([0x57, 0x41, 0x56, 0x45], 8);
    head.set([0x64, 0x73, 0x36, 0x34], 12); // "ds64"
    v.setUint32(16, DS64_BODY, true);
    v.setBigUint64(20, BigInt(riffSize), true);
    v.setBigUint64(28, BigInt(dataBytes), true);
    v.setBigUint64(36, BigInt(frames), true);
    v.setUint32(44, 0, true); // no table: no other chunk needs a 64-bit size
    const patches = [
      { at: 0, bytes: head },
      { at: layout.dataSizeAt, bytes: u32(U32_MAX) },
    ];
    if (layout.factAt !== null) patches.push({ at: layout.factAt, bytes: u32(U32_MAX) });
    return patches;
  }
  const patches = [
    { at: 4, bytes: u32(riffSize) },
    { at: layout.dataSizeAt, bytes: u32(dataBytes) },
  ];
  if (layout.factAt !== null) patches.push({ at: layout.factAt, bytes: u32(frames) });
  return patches;
}

function concat(parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

export class BwfWriter {
  private framesWritten = 0;
  private clipped = 0;
  private position: number;
  /** Encoded bytes waiting to be written: staging[0…staged). Reused, so a render allocates no output buffers. */
  private staging = new Uint8Array(WRITE_BUFFER_BYTES);
  private staged = 0;
  private closed = false;

  private constructor(
    readonly path: string,
    private readonly handle: FileHandle,
    private readonly options: BwfWriterOptions,
    private readonly layout: Layout,
    private readonly dither: TpdfDither | null,
    /** Hash of every byte written so far, in file order; null once that order is broken. */
    private hash: Hash | null,
  ) {
    this.position = layout.dataOffset;
  }

  /** Create (truncate) the file and write its header. */
  static async create(path: string, options: BwfWriterOptions): Promise<BwfWriter> {
    const { encoding, channels, sampleRateHz } = options;
    const okPcm = encoding.format === "pcm" && [16, 24, 32].includes(encoding.bitsPerSample);
    const okFloat = encoding.format === "float" && encoding.bitsPerSample === 32;
    if (!okPcm && !okFloat)
      throw new RangeError(
        `The writer produces 16/24/32-bit PCM or 32-bit float, not ${encoding.bitsPerSample}-bit ${encoding.format}.`,
      );
    if (channels !== 1 && channels !== 2) throw new RangeError("The writer produces mono or stereo files.");
    if (!Number.isInteger(sampleRateHz) || sampleRateHz <= 0)
      throw new RangeError(`Sample rate ${sampleRateHz} is not a positive whole number of Hz.`);
    const blockAlign = (channels * encoding.bitsPerSample) / 8;
    const isFloat = encoding.format === "float";

    const bextBody = encodeBext(options.bext ?? {});
    const fmtBody = new Uint8Array(isFloat ? 18 : 16);
    const fv = new DataView(fmtBody.buffer);
    fv.setUint16(0, isFloat ? WAVE_FORMAT_IEEE_FLOAT : WAVE_FORMAT_PCM, true);
    fv.setUint16(2, channels, true);
    fv.setUint32(4, sampleRateHz, true);
    fv.setUint32(8, sampleRateHz * blockAlign, true);
    fv.setUint16(12, blockAlign, true);
    fv.setUint16(14, encoding.bitsPerSample, true);
    // cbSize = 0 (bytes 16–17) for the non-PCM float format.

    const parts: Uint8Array[] = [chunkHeader("RIFF", 0), new Uint8Array([0x57, 0x41, 0x56, 0x45])];
    parts.push(chunkHeader("JUNK", DS64_BODY), new Uint8Array(DS64_BODY));
    // bext body is already padded to even length; its size field holds the unpadded length.
    const bextSize = 602 + bextCodingHistory(options.bext?.codingHistory ?? "").length;
    parts.push(chunkHeader("bext", bextSize), bextBody);
    if (options.unicodeText) {
      const xml = new TextEncoder().encode(ixmlDocument(options.unicodeText));
      const padded = new Uint8Array(xml.length + (xml.length & 1));
      padded.set(xml);
      parts.push(chunkHeader("iXML", xml.length), padded);
    }
    parts.push(chunkHeader("fmt ", fmtBody.length), fmtBody);
    let offset = parts.reduce((s, p) => s + p.length, 0);
    let factAt: number | null = null;
    if (isFloat) {
      factAt = offset + 8;
      parts.push(chunkHeader("fact", 4), new Uint8Array(4));
      offset += 12;
    }
    const dataSizeAt = offset + 4;
    parts.push(chunkHeader("data", 0));
    const header = concat(parts);
    const layout: Layout = { dataSizeAt, factAt, dataOffset: header.length, blockAlign };
    const expected = options.expectedFrames;
    if (expected !== undefined) {
      if (!Number.isInteger(expected) || expected < 0)
        throw new RangeError(`Expected frames ${expected} is not a whole number.`);
      for (const p of sizePatches(layout, expected, options.rf64ThresholdBytes ?? U32_MAX))
        header.set(p.bytes, p.at);
    }

    const handle = await open(path, "w");
    try {
      await handle.write(header, 0, header.length, 0);
    } catch (error) {
      await handle.close();
      throw error;
    }
    const dither = !isFloat && options.dither !== false ? new TpdfDither(options.ditherSeed) : null;
    const hash = expected !== undefined ? createHash("sha256").update(header) : null;
    return new BwfWriter(path, handle, options, layout, dither, hash);
  }

  get frames(): number {
    return this.framesWritten;
  }

  /** Encode and append frames (one array per channel; `frames` defaults to their length). */
  async write(channels: Float64Array[], frames = channels[0]?.length ?? 0, gain = 1): Promise<void> {
    if (channels.length !== this.options.channels)
      throw new RangeError(`Expected ${this.options.channels} channel arrays, got ${channels.length}.`);
    await this.writeInterleaved(interleave(channels, frames), frames, gain);
  }

  /** Encode and append `frames` interleaved frames, times `gain`, dithered for integer output. */
  async writeInterleaved(samples: Float64Array | Float32Array, frames: number, gain = 1): Promise<void> {
    if (this.closed) throw new Error("The writer is closed.");
    const count = frames * this.options.channels;
    if (samples.length < count) throw new RangeError(`Expected ${count} samples, got ${samples.length}.`);
    const { encoding } = this.options;
    if (encoding.format === "float") {
      const encoded = encodeInterleavedFloat(samples, count, gain, encoding.bitsPerSample);
      this.clipped += encoded.clipped;
      this.framesWritten += frames;
      await this.append(encoded.bytes);
      return;
    }
    const size = count * (encoding.bitsPerSample / 8);
    const target = await this.reserve(size);
    this.clipped += (this.options.dsp ?? defaultDsp()).encodePcm(
      samples,
      count,
      gain,
      encoding.bitsPerSample,
      this.dither?.state ?? null,
      target,
    );
    this.staged += size;
    this.framesWritten += frames;
    if (this.staged >= WRITE_BUFFER_BYTES) await this.flush();
  }

  private async append(bytes: Uint8Array): Promise<void> {
    if (this.closed) throw new Error("The writer is closed.");
    (await this.reserve(bytes.length)).set(bytes);
    this.staged += bytes.length;
    if (this.staged >= WRITE_BUFFER_BYTES) await this.flush();
  }

  /** Room for `size` more bytes at the end of the staging buffer (flushing or growing it first). */
  private async reserve(size: number): Promise<Uint8Array> {
    if (this.staged + size > this.staging.length) {
      await this.flush();
      if (size > this.staging.length) this.staging = new Uint8Array(size);
    }
    return this.staging.subarray(this.staged, this.staged + size);
  }

  private async flush(): Promise<void> {
    if (this.staged === 0) return;
    const block = this.staging.subarray(0, this.staged);
    this.staged = 0;
    this.hash?.update(block);
    let done = 0;
    while (done < block.length) {
      const { bytesWritten } = await this.handle.write(
        block,
        done,
        block.length - done,
        this.position + done,
      );
      done += bytesWritten;
    }
    this.position += block.length;
  }

  /** Patch the sizes (switching to RF64 when needed) and close the file. */
  async close(): Promise<BwfWriteResult> {
    await this.flush();
    this.closed = true;
    try {
      const dataBytes = this.framesWritten * this.layout.blockAlign;
      const pad = dataBytes & 1;
      if (pad) {
        await this.handle.write(new Uint8Array(1), 0, 1, this.position);
        this.hash?.update(new Uint8Array(1));
        this.position += 1;
      }
      const fileBytes = this.layout.dataOffset + dataBytes + pad;
      const threshold = this.options.rf64ThresholdBytes ?? U32_MAX;
      // Written with its final sizes already when the expected length was met.
      if (this.framesWritten !== this.options.expectedFrames) {
        this.hash = null;
        for (const p of sizePatches(this.layout, this.framesWritten, threshold))
          await this.handle.write(p.bytes, 0, p.bytes.length, p.at);
      }
      if (this.options.sync !== false) await this.handle.sync();
      return {
        path: this.path,
        container: fileBytes - 8 > threshold ? "RF64" : "RIFF",
        frames: this.framesWritten,
        bytes: fileBytes,
        dataOffset: this.layout.dataOffset,
        dataBytes,
        clippedSamples: this.clipped,
        sha256: this.hash ? this.hash.digest("hex") : null,
      };
    } finally {
      await this.handle.close();
    }
  }

  /** Close without finishing (the caller removes the partial file). */
  async abort(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    this.staged = 0;
    await this.handle.close();
  }
}
