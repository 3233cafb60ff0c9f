/**
 * WAV / Broadcast WAVE / RF64 header reading over any ByteSource.
 *
 * Sources: Microsoft "Multimedia Programming Interface and Data Specifications
 * 1.0" (RIFF, WAVE fmt, WAVE_FORMAT_PCM / IEEE_FLOAT), Microsoft
 * WAVE_FORMAT_EXTENSIBLE (KSDATAFORMAT_SUBTYPE_* GUIDs), EBU Tech 3285 (bext),
 * EBU Tech 3306 (RF64: ds64 chunk carrying 64-bit sizes when a 32-bit field
 * holds 0xFFFFFFFF). ITU-R BS.2088 BW64 has the RF64 layout and is read the same way.
 *
 * Only chunk headers, fmt and bext are read (a handful of ranged reads, the
 * first 64 KiB in one go), never the audio.
 */
import { BEXT_FIXED_BYTES, parseBext } from "./bext";
import type { Bext } from "./bext";
import type { SampleFormat } from "./codecs";
import { WavError } from "./errors";
import type { ByteSource } from "./source";

export const WAVE_FORMAT_PCM = 0x0001;
export const WAVE_FORMAT_IEEE_FLOAT = 0x0003;
export const WAVE_FORMAT_EXTENSIBLE = 0xfffe;

export const MIN_RATE_HZ = 44_100;
export const MAX_RATE_HZ = 384_000;

export interface WavChunk {
  id: string;
  /** Offset of the chunk's 8-byte header. */
  offset: number;
  /** Body size in bytes (from ds64 in RF64 when the 32-bit field is 0xFFFFFFFF). */
  size: number;
}

export interface WavHeader {
  container: "RIFF" | "RF64";
  format: SampleFormat;
  /** wFormatTag as stored: 1, 3 or 0xFFFE. */
  formatTag: number;
  /** True for WAVE_FORMAT_EXTENSIBLE (the format then comes from its SubFormat GUID). */
  extensible: boolean;
  /** Container bits per sample (16, 24, 32 or 64). */
  bitsPerSample: number;
  /** wValidBitsPerSample of EXTENSIBLE, else equal to bitsPerSample. */
  validBitsPerSample: number;
  channels: 1 | 2;
  channelMask: number | null;
  sampleRateHz: number;
  /** Bytes per frame (all channels of one sample instant). */
  blockAlign: number;
  /** Offset of the first audio byte. */
  dataOffset: number;
  dataBytes: number;
  frames: number;
  durationSeconds: number;
  bext?: Bext;
  chunks: WavChunk[];
}

const HEAD_BYTES = 64 * 1024;
/** A coding history this long is not a coding history; refuse rather than read it. */
const MAX_BEXT_BYTES = 16 * 1024 * 1024;
const U32_MAX = 0xffffffff;

/** Tail (bytes 2–15) shared by every KSDATAFORMAT_SUBTYPE_* GUID built from a format tag (mmreg.h). */
const GUID_TAIL = [0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xaa, 0x00, 0x38, 0x9b, 0x71];

/** Names for the format tags people actually meet, so a refusal says what the file is. */
const FORMAT_NAMES: Record<number, string> = {
  0x0002: "Microsoft ADPCM",
  0x0006: "A-law",
  0x0007: "μ-law",
  0x0011: "IMA ADPCM",
  0x0031: "GSM 6.10",
  0x0050: "MPEG audio",
  0x0055: "MPEG layer 3 (MP3)",
  0x00ff: "AAC",
  0x0161: "Windows Media Audio",
  0x2000: "Dolby AC-3",
  0xf1ac: "FLAC",
};

const ACCEPTED = "Rillbook accepts 16-, 24- or 32-bit PCM and 32- or 64-bit IEEE float";

class Reader {
  private head: Uint8Array | null = null;
  constructor(readonly source: ByteSource) {}

  async bytes(offset: number, length: number): Promise<Uint8Array> {
    if (!this.head) this.head = await this.source.read(0, Math.min(this.source.size, HEAD_BYTES));
    if (offset + length <= this.head.length) return this.head.subarray(offset, offset + length);
    return this.source.read(offset, length);
  }
}

function ascii(bytes: Uint8Array, start = 0, length = 4): string {
  let s = "";
  for (let i = start; i < start + length && i < bytes.length; i++) s += String.fromCharCode(bytes[i]);
  return s;
}

/** Show the first bytes of a file the way a person can recognise them. */
function printable(bytes: Uint8Array): string {
  let s = "";
  for (let i = 0; i < Math.min(4, bytes.length); i++) {
    const c = bytes[i];
    s += c >= 0x20 && c < 0x7f ? String.fromCharCode(c) : `\\x${c.toString(16).padStart(2, "0")}`;
  }
  return s;
}

function u16(b: Uint8Array, o: number): number {
  return b[o] | (b[o + 1] << 8);
}
function u32(b: Uint8Array, o: number): number {
  return (b[o] | (b[o + 1] << 8) | (b[o + 2] << 16)) + b[o + 3] * 0x1000000;
}
function u64(b: Uint8Array, o: number): number {
  const value = u32(b, o) + u32(b, o + 4) * 2 ** 32;
  if (!Number.isSafeInteger(value))
    throw new WavError(`A 64-bit size at byte offset ${o} (ds64) is beyond 2^53 bytes.`, o);
  return value;
}

interface Fmt {
  format: SampleFormat;
  formatTag: number;
  extensible: boolean;
  channels: 1 | 2;
  sampleRateHz: number;
  blockAlign: number;
  bitsPerSample: number;
  validBitsPerSample: number;
  channelMask: number | null;
}

function parseFmt(body: Uint8Array, at: number): Fmt {
  if (body.length < 16) {
    throw new WavError(
      `The fmt chunk at byte offset ${at} is ${body.length} bytes; a PCM fmt chunk needs at least 16 (wFormatTag … wBitsPerSample).`,
      at,
    );
  }
  const formatTag = u16(body, 0);
  const channels = u16(body, 2);
  const sampleRateHz = u32(body, 4);
  const blockAlign = u16(body, 12);
  const bitsPerSample = u16(body, 14);
  let tag = formatTag;
  let validBitsPerSample = bitsPerSample;
  let channelMask: number | null = null;
  const extensible = formatTag === WAVE_FORMAT_EXTENSIBLE;
  if (extensible) {
    // WAVEFORMATEXTENSIBLE: cbSize (≥ 22) at 16, wValidBitsPerSample at 18, dwChannelMask at 20, SubFormat GUID at 24.
    if (body.length < 40 || u16(body, 16) < 22) {
      throw new WavError(
        `The fmt chunk at byte offset ${at} says WAVE_FORMAT_EXTENSIBLE but is ${body.length} ` +
          `bytes (cbSize ${body.length >= 18 ? u16(body, 16) : "missing"}); it needs 40 bytes ` +
          `with cbSize 22.`,
        at,
      );
    }
    validBitsPerSample = u16(body, 18);
    channelMask = u32(body, 20);
    const guidOk = GUID_TAIL.every((v, i) => body[26 + i] === v);
    tag = u16(body, 24);
    if (!guidOk) {
      const hex = Array.from(body.subarray(24, 40), (v) => v.toString(16).padStart(2, "0")).join("");
      throw new WavError(
        `Unsupported encoding: the WAVE_FORMAT_EXTENSIBLE SubFormat GUID ${hex} (fmt chunk at byte offset ${at}) is not PCM or IEEE float. ${ACCEPTED}.`,
        at + 8 + 24,
      );
    }
  }
  if (channels === 0)
    throw new WavError(
      `0 channels: the fmt chunk at byte offset ${at} declares no audio channels.`,
      at + 8 + 2,
    );
  if (channels > 2)
    throw new WavError(
      `${channels} channels: Rillbook accepts mono or stereo transfers (fmt chunk at byte offset ${at}).`,
      at + 8 + 2,
    );
  let format: SampleFormat;
  const where = `fmt chunk at byte offset ${at}`;
  if (tag === WAVE_FORMAT_PCM) {
    if (bitsPerSample !== 16 && bitsPerSample !== 24 && bitsPerSample !== 32) {
      throw new WavError(
        `Unsupported encoding: ${bitsPerSample}-bit PCM (${where}). ${ACCEPTED}.`,
        at + 8 + 14,
      );
    }
    format = "pcm";
  } else if (tag === WAVE_FORMAT_IEEE_FLOAT) {
    if (bitsPerSample !== 32 && bitsPerSample !== 64) {
      throw new WavError(
        `Unsupported encoding: ${bitsPerSample}-bit IEEE float (${where}). ${ACCEPTED}.`,
        at + 8 + 14,
      );
    }
    format = "float";
  } else {
    const name = FORMAT_NAMES[tag] ?? "an encoding Rillbook does not read";
    throw new WavError(
      `Unsupported encoding: ${name} (format tag 0x${tag.toString(16).padStart(4, "0")}, ${where}). ${ACCEPTED}.`,
      at + 8 + (extensible ? 24 : 0),
    );
  }
  if (validBitsPerSample === 0 || validBitsPerSample > bitsPerSample) {
    throw new WavError(
      `wValidBitsPerSample ${validBitsPerSample} does not fit the ${bitsPerSample}-bit container (${where}).`,
      at + 8 + 18,
    );
  }
  if (sampleRateHz < MIN_RATE_HZ || sampleRateHz > MAX_RATE_HZ) {
    throw new WavError(
      `Sample rate ${sampleRateHz} Hz (${where}) is outside the 44 100–384 000 Hz Rillbook accepts for transfers.`,
      at + 8 + 4,
    );
  }
  const expected = (channels * bitsPerSample) / 8;
  if (blockAlign !== expected) {
    throw new WavError(
      `Block align mismatch: nBlockAlign is ${blockAlign} but ${channels} channel${channels === 1 ? "" : "s"} ` +
        `× ${bitsPerSample} bits needs ${expected} bytes per frame (${where}).`,
      at + 8 + 12,
    );
  }
  return {
    format,
    formatTag,
    extensible,
    channels: channels as 1 | 2,
    sampleRateHz,
    blockAlign,
    bitsPerSample,
    validBitsPerSample,
    channelMask,
  };
}

/** Read and check the header of a WAV, BWF or RF64 file. Throws WavError naming what and where. */
/** Chunk ids met in WAV, BWF and RF64 files (EBU Tech 3285/3306, Microsoft RIFF): used to spot a missing pad byte. */
const knownChunkIds = new Set([
  "fmt ",
  "data",
  "fact",
  "LIST",
  "bext",
  "iXML",
  "axml",
  "chna",
  "cue ",
  "JUNK",
  "junk",
  "PAD ",
  "FLLR",
  "smpl",
  "inst",
  "id3 ",
  "ID3 ",
  "umid",
  "levl",
  "link",
  "mext",
  "plst",
  "cart",
  "PEAK",
  "qlty",
  "acid",
  "DISP",
  "afsp",
  "ds64",
]);

export async function readWavHeader(source: ByteSource): Promise<WavHeader> {
  const size = source.size;
  const r = new Reader(source);
  if (size === 0) throw new WavError("The file is empty (0 bytes): not a WAVE file.", 0);
  const first = await r.bytes(0, Math.min(12, size));
  const id = ascii(first, 0, 4);
  const isRf64 = id === "RF64" || id === "BW64";
  if (id !== "RIFF" && !isRf64) {
    throw new WavError(
      `Not a RIFF/RF64 WAVE file: it starts with "${printable(first)}" where "RIFF" or "RF64" belongs.`,
      0,
    );
  }
  if (size < 12)
    throw new WavError(
      `Truncated header: the file is ${size} bytes, shorter than the 12-byte ${id} header.`,
      size,
    );
  if (ascii(first, 8, 4) !== "WAVE") {
    throw new WavError(
      `Not a WAVE file: the ${id} form type is "${printable(first.subarray(8, 12))}" instead of "WAVE".`,
      8,
    );
  }

  const chunks: WavChunk[] = [];
  let riffSize = u32(first, 4);
  let ds64Data: number | null = null;
  const ds64Table = new Map<string, number>();
  let p = 12;
  if (isRf64) {
    // EBU Tech 3306 §3: ds64 is the first chunk, holding the 64-bit RIFF, data and sample counts.
    if (size < 20)
      throw new WavError(
        `Truncated header: the file is ${size} bytes and ends before the ds64 chunk an RF64 file starts with.`,
        size,
      );
    const h = await r.bytes(12, 8);
    if (ascii(h) !== "ds64")
      throw new WavError(
        `RF64 file without its ds64 chunk: found "${printable(h)}" at byte offset 12, where EBU Tech 3306 puts ds64.`,
        12,
      );
    const dsSize = u32(h, 4);
    if (dsSize < 28)
      throw new WavError(`The ds64 chunk at byte offset 12 is ${dsSize} bytes; it needs at least 28.`, 12);
    if (20 + dsSize > size)
      throw new WavError(
        `Truncated header: the ds64 chunk at byte offset 12 declares ${dsSize} bytes but the file ends after ${size - 20}.`,
        12,
      );
    const ds = await r.bytes(20, dsSize);
    riffSize = u64(ds, 0);
    ds64Data = u64(ds, 8);
    const tableLength = u32(ds, 24);
    if (28 + tableLength * 12 > dsSize)
      throw new WavError(
        `The ds64 chunk at byte offset 12 lists ${tableLength} chunk sizes but has room for ${Math.floor((dsSize - 28) / 12)}.`,
        12,
      );
    for (let i = 0; i < tableLength; i++) ds64Table.set(ascii(ds, 28 + 12 * i), u64(ds, 32 + 12 * i));
    chunks.push({ id: "ds64", offset: 12, size: dsSize });
    p = 20 + dsSize + (dsSize & 1);
  } else if (riffSize === U32_MAX) {
    // Some writers leave 0xFFFFFFFF in a RIFF header they never closed; walk to the end of the file.
    riffSize = size - 8;
  }
  const riffEnd = 8 + riffSize;
  const walkEnd = Math.min(riffEnd, size);

  let fmt: Fmt | null = null;
  let data: WavChunk | null = null;
  let bext: Bext | undefined;
  /** The chunk just walked when its size was odd: the next one should start after a pad byte. */
  let odd: WavChunk | null = null;
  while (p < walkEnd) {
    if (p + 8 > size) {
      if (!data)
        throw new WavError(
          `Truncated header: the file ends at byte ${size}, inside the chunk header at byte offset ${p}.`,
          p,
        );
      break; // a stray pad byte or two after the audio
    }
    if (p + 8 > walkEnd) break;
    const h = await r.bytes(p, 8);
    const cid = ascii(h);
    const size32 = u32(h, 4);
    if (odd && !knownChunkIds.has(cid)) {
      // A writer that forgot the pad byte after an odd-sized chunk starts the next chunk one
      // byte early; read there, the header makes sense where the aligned one does not.
      const early = await r.bytes(p - 1, 8);
      const earlyId = ascii(early);
      const fits = p - 1 + 8 + u32(early, 4) <= size;
      if (
        knownChunkIds.has(earlyId) ||
        (/^[A-Za-z][A-Za-z0-9 ]{3}$/.test(earlyId) && fits && p + 8 + size32 > size)
      )
        throw new WavError(
          `The ${odd.id.trim()} chunk at byte offset ${odd.offset} has an odd size (${odd.size} bytes) ` +
            `but is not followed by the pad byte the RIFF format requires, so the next chunk ` +
            `("${earlyId.trim()}") starts one byte early, at offset ${p - 1}. The program that wrote ` +
            `this file broke the format: export the transfer again or repair its chunks.`,
          odd.offset,
        );
    }
    let csize = size32;
    if (isRf64 && size32 === U32_MAX) {
      const big = cid === "data" ? ds64Data : ds64Table.get(cid);
      if (big === undefined || big === null)
        throw new WavError(
          `Chunk "${cid}" at byte offset ${p} has size 0xFFFFFFFF but the ds64 chunk gives no 64-bit size for it.`,
          p,
        );
      csize = big;
    }
    const body = p + 8;
    if (body + csize > size) {
      if (cid === "data") {
        throw new WavError(
          `The data chunk at byte offset ${p} declares ${csize} bytes of audio but only ${size - body} ` +
            `bytes follow it: the file is truncated or its size field is wrong.`,
          p,
        );
      }
      if (!fmt && !data && (cid === "fmt " || cid === "ds64")) {
        throw new WavError(
          `Truncated header: the ${cid.trim()} chunk at byte offset ${p} declares ${csize} bytes but the file ends after ${size - body}.`,
          p,
        );
      }
      throw new WavError(
        `Chunk "${printable(h)}" at byte offset ${p} declares ${csize} bytes, which runs ` +
          `${body + csize - size} bytes past the end of the file (${size} bytes).`,
        p,
      );
    }
    const chunk = { id: cid, offset: p, size: csize };
    chunks.push(chunk);
    if (cid === "fmt ") {
      if (fmt) throw new WavError(`A second fmt chunk at byte offset ${p}.`, p);
      fmt = parseFmt(await r.bytes(body, Math.min(csize, 64)), p);
    } else if (cid === "data") {
      if (data)
        throw new WavError(`A second data chunk at byte offset ${p}; Rillbook reads files with one.`, p);
      if (!fmt)
        throw new WavError(
          `The data chunk at byte offset ${p} comes before any fmt chunk, so its samples cannot be interpreted.`,
          p,
        );
      data = chunk;
    } else if (cid === "bext") {
      if (csize < BEXT_FIXED_BYTES)
        throw new WavError(
          `The bext chunk at byte offset ${p} is ${csize} bytes; EBU Tech 3285 fixes its first ${BEXT_FIXED_BYTES}.`,
          p,
        );
      if (csize > MAX_BEXT_BYTES)
        throw new WavError(
          `The bext chunk at byte offset ${p} is ${csize} bytes, more than a coding history can sensibly hold.`,
          p,
        );
      bext = parseBext(await r.bytes(body, csize));
    }
    // RIFF chunks start on even offsets: an odd-sized chunk is followed by a pad byte.
    odd = csize & 1 ? chunk : null;
    p = body + csize + (csize & 1);
  }

  const tail =
    riffEnd < size ? ` within the ${riffSize + 8} bytes the ${id} header at byte offset 4 declares` : "";
  if (!fmt) throw new WavError(`No fmt chunk${tail}: the file does not say how its samples are encoded.`);
  if (!data) throw new WavError(`No data chunk${tail}: the file holds no audio.`);
  if (riffEnd > size) {
    throw new WavError(
      `Truncated file: the ${id} header at byte offset 4 declares ${riffSize + 8} bytes but the file has ${size}.`,
      4,
    );
  }
  if (data.size % fmt.blockAlign !== 0) {
    throw new WavError(
      `Block align mismatch: the data chunk at byte offset ${data.offset} holds ${data.size} bytes, not a whole number of ${fmt.blockAlign}-byte frames.`,
      data.offset,
    );
  }
  const frames = data.size / fmt.blockAlign;
  return {
    container: isRf64 ? "RF64" : "RIFF",
    format: fmt.format,
    formatTag: fmt.formatTag,
    extensible: fmt.extensible,
    bitsPerSample: fmt.bitsPerSample,
    validBitsPerSample: fmt.validBitsPerSample,
    channels: fmt.channels,
    channelMask: fmt.channelMask,
    sampleRateHz: fmt.sampleRateHz,
    blockAlign: fmt.blockAlign,
    dataOffset: data.offset + 8,
    dataBytes: data.size,
    frames,
    durationSeconds: frames / fmt.sampleRateHz,
    ...(bext ? { bext } : {}),
    chunks,
  };
}
