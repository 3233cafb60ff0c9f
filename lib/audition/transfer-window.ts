/**
 * Reading a flat transfer for auditioning: the header, a sparse overview of its
 * levels, and one window of frames decoded with the same codecs the renderer uses.
 */
import { mixToMono, type ChannelMode } from "@/lib/audio/channel-mode";
import { decodeInterleaved } from "@/lib/audio/codecs";
import { readWavHeader, type WavHeader } from "@/lib/audio/header";
import { rangeFetch, rangeSource } from "./range-source";

export interface OpenedTransfer {
  url: string;
  header: WavHeader;
}

export async function openTransfer(
  url: string,
  bytes: number,
  signal?: AbortSignal,
): Promise<OpenedTransfer> {
  return { url, header: await readWavHeader(rangeSource(url, bytes, signal)) };
}

/**
 * Peak level (dBFS) of `points` short stretches spread evenly across the file: a
 * cheap overview to pick a place to listen from (a few hundred kilobytes at most,
 * whatever the file's length).
 */
export async function overviewPeaks(
  t: OpenedTransfer,
  points = 200,
  signal?: AbortSignal,
  concurrency = 6,
): Promise<Float32Array> {
  const h = t.header;
  const peaks = new Float32Array(points).fill(-120);
  const stretchFrames = Math.max(1, Math.min(2048, Math.floor(h.frames / points)));
  const enc = { format: h.format, bitsPerSample: h.bitsPerSample };
  let next = 0;
  const worker = async () => {
    while (next < points) {
      const i = next++;
      const startFrame = Math.floor((i / points) * Math.max(0, h.frames - stretchFrames));
      const bytes = await rangeFetch(
        t.url,
        h.dataOffset + startFrame * h.blockAlign,
        stretchFrames * h.blockAlign,
        signal,
      );
      const whole = bytes.subarray(0, Math.floor(bytes.length / h.blockAlign) * h.blockAlign);
      const samples = new Float64Array(whole.length / (h.bitsPerSample / 8));
      decodeInterleaved(whole, enc, samples);
      let peak = 0;
      for (let k = 0; k < samples.length; k++) peak = Math.max(peak, Math.abs(samples[k]));
      peaks[i] = peak > 0 ? 20 * Math.log10(peak) : -120;
    }
  };
  await Promise.all(Array.from({ length: concurrency }, worker));
  return peaks;
}

export interface AudioWindow {
  sampleRateHz: number;
  startSeconds: number;
  /** Samples after the channel choice: one array for a single channel, two for "both". */
  channels: Float32Array[];
}

/** The render's channel choice (lib/audio/channel-mode.ts) on `interleaved` frames, as float32 channels for Web Audio. */
function applyChannelMode(interleaved: Float64Array, channels: number, mode: ChannelMode): Float32Array[] {
  const n = interleaved.length / channels;
  if (channels === 1) return [Float32Array.from(interleaved)];
  if (mode === "both") {
    const l = new Float32Array(n);
    const r = new Float32Array(n);
    for (let i = 0; i < n; i++) {
      l[i] = interleaved[2 * i];
      r[i] = interleaved[2 * i + 1];
    }
    return [l, r];
  }
  const out = new Float32Array(n);
  mixToMono(mode, interleaved, n, out);
  return [out];
}

/** One Range request for `seconds` of audio from `startSeconds` (clamped to the file). */
export async function readWindow(
  t: OpenedTransfer,
  startSeconds: number,
  seconds: number,
  mode: ChannelMode,
  signal?: AbortSignal,
): Promise<AudioWindow> {
  const h = t.header;
  const wantFrames = Math.min(h.frames, Math.round(seconds * h.sampleRateHz));
  const startFrame = Math.max(0, Math.min(h.frames - wantFrames, Math.round(startSeconds * h.sampleRateHz)));
  const bytes = await rangeFetch(
    t.url,
    h.dataOffset + startFrame * h.blockAlign,
    wantFrames * h.blockAlign,
    signal,
  );
  const whole = bytes.subarray(0, Math.floor(bytes.length / h.blockAlign) * h.blockAlign);
  const samples = new Float64Array(whole.length / (h.bitsPerSample / 8));
  decodeInterleaved(whole, { format: h.format, bitsPerSample: h.bitsPerSample }, samples);
  return {
    sampleRateHz: h.sampleRateHz,
    startSeconds: startFrame / h.sampleRateHz,
    channels: applyChannelMode(samples, h.channels, mode),
  };
}
