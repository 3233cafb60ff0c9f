// A stand-in flat transfer for the bench tests: 24-bit PCM WAV with a few tones
// (in phase on both channels, as a lateral groove plays), a little hiss like a
// disc surface, a 50 Hz mains hum and some low rumble. Deterministic (seeded noise).
import { writeFileSync } from "node:fs";

export interface MakeWavOptions {
  seconds?: number;
  sampleRateHz?: number;
  channels?: 1 | 2;
  seed?: number;
}

export function makeWav({
  seconds = 10,
  sampleRateHz = 44_100,
  channels = 2,
  seed = 7,
}: MakeWavOptions = {}): Uint8Array {
  const frames = Math.round(seconds * sampleRateHz);
  const bytesPerSample = 3;
  const dataBytes = frames * channels * bytesPerSample;
  const out = new Uint8Array(44 + dataBytes);
  const view = new DataView(out.buffer);
  const ascii = (o: number, s: string) => [...s].forEach((ch, i) => (out[o + i] = ch.charCodeAt(0)));
  ascii(0, "RIFF");
  view.setUint32(4, 36 + dataBytes, true);
  ascii(8, "WAVE");
  ascii(12, "fmt ");
  view.setUint32(16, 16, true);
  view.setUint16(20, 1, true); // WAVE_FORMAT_PCM
  view.setUint16(22, channels, true);
  view.setUint32(24, sampleRateHz, true);
  view.setUint32(28, sampleRateHz * channels * bytesPerSample, true);
  view.setUint16(32, channels * bytesPerSample, true);
  view.setUint16(34, 24, true);
  ascii(36, "data");
  view.setUint32(40, dataBytes, true);

  let state = seed >>> 0;
  const rand = () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const tones = [
    { hz: 220, amp: 0.12 },
    { hz: 1000, amp: 0.1 },
    { hz: 3300, amp: 0.05 },
  ];
  const full = 2 ** 23 - 1;
  let o = 44;
  for (let n = 0; n < frames; n++) {
    const t = n / sampleRateHz;
    // A slow swell so the level overview has something to show.
    const swell = 0.6 + 0.4 * Math.sin(2 * Math.PI * 0.15 * t);
    let music = 0;
    for (const tone of tones) music += tone.amp * Math.sin(2 * Math.PI * tone.hz * t);
    const hum = 0.02 * Math.sin(2 * Math.PI * 50 * t) + 0.006 * Math.sin(2 * Math.PI * 150 * t);
    const rumble = 0.015 * Math.sin(2 * Math.PI * 9 * t);
    for (let c = 0; c < channels; c++) {
      const hiss = 0.01 * (rand() + rand() - 1);
      // Rumble is vertical motion: opposite phase on the two channels of a stereo pickup.
      const v = music * swell + hum + (c === 0 ? rumble : -rumble) + hiss;
      let s = Math.round(Math.max(-1, Math.min(1, v)) * full);
      if (s < 0) s += 1 << 24;
      out[o++] = s & 0xff;
      out[o++] = (s >> 8) & 0xff;
      out[o++] = (s >> 16) & 0xff;
    }
  }
  return out;
}

// `npx tsx tests/support/make-wav.ts out.wav [seconds]` writes one to disk.
if (process.argv[1]?.endsWith("make-wav.ts") && process.argv[2]) {
  writeFileSync(process.argv[2], makeWav({ seconds: Number(process.argv[3] ?? 10) }));
}
