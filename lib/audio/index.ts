/**
 * Rillbook audio files: WAV/BWF/RF64 header reading, sample codecs, the
 * streaming Broadcast WAVE writer and the streaming access-copy render.
 * Node-only (file handles, crypto); no framework or database imports.
 */
export { WavError } from "./errors";
export { bufferSource, openFileSource } from "./source";
export type { ByteSource, ClosableByteSource } from "./source";
export {
  readWavHeader,
  WAVE_FORMAT_PCM,
  WAVE_FORMAT_IEEE_FLOAT,
  WAVE_FORMAT_EXTENSIBLE,
  MIN_RATE_HZ,
  MAX_RATE_HZ,
} from "./header";
export type { WavHeader, WavChunk } from "./header";
export {
  parseBext,
  encodeBext,
  bextAscii,
  formatCodingHistoryLine,
  parseCodingHistory,
  BEXT_FIXED_BYTES,
  BEXT_VERSION,
} from "./bext";
export type { Bext, BextInput, BextLoudness, CodingHistoryLine } from "./bext";
export { decodeFrames, encodeFrames, fullScalePositive, TpdfDither } from "./codecs";
export type { SampleEncoding, SampleFormat, EncodeOptions, EncodeResult } from "./codecs";
export { BwfWriter } from "./writer";
export type { BwfWriterOptions, BwfWriteResult } from "./writer";
export { renderAccessCopy, RenderError } from "./render";
export type { EqualizationNote, RenderOptions, RenderResult, SpeedCorrection } from "./render";
export { wholeRates } from "./resample";
export { estimatePitch, proposedCutSpeed, PitchError, MAX_PITCH_FFT } from "./pitch";
export type { PitchEstimate } from "./pitch";
export { convolveDirect, convolverSizes, PairConvolver, StreamingConvolver } from "./convolver";
export { CHANNEL_MODE_TEXT, mixToMono } from "./channel-mode";
export type { ChannelMode } from "./channel-mode";
