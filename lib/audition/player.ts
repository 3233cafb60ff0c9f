/**
 * The audition player: one window of the flat transfer played through up to
 * four candidate curves and a flat path at once, each behind its own gain, so
 * switching is a 25 ms crossfade with no gap. Each curve is the chain of
 * IIRFilterNodes built from lib/curves' second-order sections at the transfer's
 * own sample rate, levelled to 0 dB at 1 kHz like the flat path, so a switch
 * changes the balance and not the loudness.
 *
 *   source ─┬─ [sections] ─ match ─ switch ─┐
 *           ├─ [sections] ─ match ─ switch ─┼─ volume ─ peak guard ─ out
 *           └─────────────── flat ─ switch ─┤
 *   companion ────────────── level ─ switch ─┘
 *
 * The companion is a second recording of the same stretch (the access copy the server
 * rendered), started in step with the first, so A/B between "the access copy" and "the
 * flat transfer through the chosen curve in this browser" switches with no gap either.
 */
import { type CurveSpec, designIir } from "@/lib/curves";
import { matchAt1kHzDb } from "./curve-merge";
import type { AudioWindow } from "./transfer-window";

export interface AuditionCandidate {
  id: string;
  label: string;
  /** null is the flat transfer. */
  spec: CurveSpec | null;
}

interface Chain {
  nodes: AudioNode[];
  switchGain: GainNode;
}

/** Volume the player starts at: bass boosts of 20 dB and more are common in these curves. */
export const SAFE_START_DB = -24;
const FADE_S = 0.025;

const dbToGain = (db: number) => 10 ** (db / 20);

export class AuditionPlayer {
  readonly ctx: AudioContext;
  private readonly volume: GainNode;
  private readonly guard: DynamicsCompressorNode;
  readonly analyser: AnalyserNode;
  private chains = new Map<string, Chain>();
  private buffer: AudioBuffer | null = null;
  private source: AudioBufferSourceNode | null = null;
  private startedAt = 0;
  private startOffset = 0;
  private active = "flat";
  private companion: {
    id: string;
    buffer: AudioBuffer;
    chain: Chain;
    source: AudioBufferSourceNode | null;
  } | null = null;
  onEnded: (() => void) | null = null;

  constructor(sampleRateHz: number) {
    // IIRFilterNode runs at the context's rate: the sections were designed for the transfer's.
    this.ctx = new AudioContext({ sampleRate: sampleRateHz });
    this.volume = this.ctx.createGain();
    this.volume.gain.value = dbToGain(SAFE_START_DB);
    // Peak guard: a fast, hard compressor holding peaks near −10 dBFS whatever the curve and volume do.
    this.guard = this.ctx.createDynamicsCompressor();
    this.guard.threshold.value = -12;
    this.guard.knee.value = 0;
    this.guard.ratio.value = 20;
    this.guard.attack.value = 0.001;
    this.guard.release.value = 0.2;
    this.analyser = this.ctx.createAnalyser();
    this.analyser.fftSize = 8192;
    this.analyser.smoothingTimeConstant = 0.6;
    this.volume.connect(this.guard).connect(this.ctx.destination);
    this.guard.connect(this.analyser);
  }

  get state(): AudioContextState {
    return this.ctx.state;
  }

  /** How much the peak guard is holding back right now (dB, ≤ 0). */
  get guardReductionDb(): number {
    return this.guard.reduction;
  }

  setVolumeDb(db: number): void {
    this.volume.gain.setTargetAtTime(dbToGain(db), this.ctx.currentTime, 0.02);
  }

  /** Rebuild the chains; throws the curve's own error when a candidate cannot be designed at this rate. */
  setCandidates(candidates: AuditionCandidate[]): void {
    const wasPlaying = this.source !== null;
    const at = this.position();
    this.stopSource();
    for (const c of this.chains.values()) for (const n of c.nodes) n.disconnect();
    this.chains.clear();
    const all: AuditionCandidate[] = [{ id: "flat", label: "Flat", spec: null }, ...candidates];
    for (const cand of all) {
      const nodes: AudioNode[] = [];
      let matchDb = 0;
      if (cand.spec) {
        const { sos } = designIir(cand.spec, this.ctx.sampleRate);
        for (const [b0, b1, b2, , a1, a2] of sos)
          nodes.push(this.ctx.createIIRFilter([b0, b1, b2], [1, a1, a2]));
        matchDb = matchAt1kHzDb(cand.spec);
      }
      const match = this.ctx.createGain();
      match.gain.value = dbToGain(matchDb);
      const switchGain = this.ctx.createGain();
      switchGain.gain.value = cand.id === this.active ? 1 : 0;
      nodes.push(match, switchGain);
      for (let i = 0; i + 1 < nodes.length; i++) nodes[i].connect(nodes[i + 1]);
      switchGain.connect(this.volume);
      this.chains.set(cand.id, { nodes, switchGain });
    }
    if (!this.chains.has(this.active) && this.companion?.id !== this.active) this.select("flat");
    if (wasPlaying && this.buffer) void this.play(at);
  }

  /**
   * A second recording of the same window, selectable as `id`, played in step with the
   * first at `levelDb` (so it can be matched in loudness to the curve it is compared with).
   */
  loadCompanion(id: string, win: AudioWindow, levelDb: number): void {
    const wasPlaying = this.source !== null;
    const at = this.position();
    this.stopSource();
    if (this.companion) for (const n of this.companion.chain.nodes) n.disconnect();
    const buffer = this.ctx.createBuffer(win.channels.length, win.channels[0]?.length || 1, win.sampleRateHz);
    win.channels.forEach((c, i) => buffer.copyToChannel(c as Float32Array<ArrayBuffer>, i));
    const level = this.ctx.createGain();
    level.gain.value = dbToGain(levelDb);
    const switchGain = this.ctx.createGain();
    switchGain.gain.value = id === this.active ? 1 : 0;
    level.connect(switchGain).connect(this.volume);
    this.companion = { id, buffer, chain: { nodes: [level, switchGain], switchGain }, source: null };
    if (wasPlaying && this.buffer) void this.play(at);
  }

  load(win: AudioWindow): void {
    this.stopSource();
    const buf = this.ctx.createBuffer(win.channels.length, win.channels[0]?.length || 1, win.sampleRateHz);
    win.channels.forEach((c, i) => buf.copyToChannel(c as Float32Array<ArrayBuffer>, i));
    this.buffer = buf;
    this.startOffset = 0;
  }

  get loaded(): boolean {
    return this.buffer !== null;
  }

  get duration(): number {
    return this.buffer?.duration ?? 0;
  }

  get playing(): boolean {
    return this.source !== null;
  }

  async play(fromSeconds = this.startOffset): Promise<void> {
    if (!this.buffer) return;
    await this.ctx.resume();
    this.stopSource();
    const src = this.ctx.createBufferSource();
    src.buffer = this.buffer;
    for (const c of this.chains.values()) src.connect(c.nodes[0]);
    const offset = Math.max(0, Math.min(fromSeconds, this.buffer.duration - 0.01));
    src.onended = () => {
      if (this.source === src) {
        this.source = null;
        this.startOffset = 0;
        this.onEnded?.();
      }
    };
    src.start(0, offset);
    this.source = src;
    if (this.companion) {
      const c = this.ctx.createBufferSource();
      c.buffer = this.companion.buffer;
      c.connect(this.companion.chain.nodes[0]);
      c.start(0, Math.min(offset, Math.max(0, this.companion.buffer.duration - 0.01)));
      this.companion.source = c;
    }
    this.startedAt = this.ctx.currentTime;
    this.startOffset = offset;
  }

  pause(): void {
    const at = this.position();
    this.stopSource();
    this.startOffset = at;
  }

  /** Seconds into the loaded window. */
  position(): number {
    if (!this.source) return this.startOffset;
    return Math.min(this.duration, this.startOffset + (this.ctx.currentTime - this.startedAt));
  }

  select(id: string): void {
    this.active = id;
    const t = this.ctx.currentTime;
    const all: [string, Chain][] = [
      ...this.chains,
      ...(this.companion ? [[this.companion.id, this.companion.chain] as [string, Chain]] : []),
    ];
    for (const [cid, c] of all) {
      c.switchGain.gain.cancelScheduledValues(t);
      c.switchGain.gain.setValueAtTime(c.switchGain.gain.value, t);
      c.switchGain.gain.linearRampToValueAtTime(cid === id ? 1 : 0, t + FADE_S);
    }
  }

  get activeId(): string {
    return this.active;
  }

  private stopSource(): void {
    const cs = this.companion?.source;
    if (cs && this.companion) {
      this.companion.source = null;
      try {
        cs.stop();
      } catch {
        /* already stopped */
      }
      cs.disconnect();
    }
    const s = this.source;
    this.source = null;
    if (s) {
      s.onended = null;
      try {
        s.stop();
      } catch {
        /* already stopped */
      }
      s.disconnect();
    }
  }

  async close(): Promise<void> {
    this.stopSource();
    await this.ctx.close();
  }
}
