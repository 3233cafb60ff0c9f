"use client";
/**
 * Listening at the bench: a window of the flat transfer fetched by byte range,
 * played through the candidate curves at matched loudness, switched without a
 * gap; a level overview of the whole side to choose where to listen; and the
 * window's averaged spectrum, flat and through each curve.
 */
import { useQuery } from "@tanstack/react-query";
import { type KeyboardEvent, useCallback, useEffect, useId, useMemo, useRef, useState } from "react";
import { formatDb } from "@/components/curves/plot-format";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { Notice } from "@/components/ui/notice";
import { type ChannelMode, channelModeLabels, channelModes } from "@/lib/audio/channel-mode";
import { matchAt1kHzDb } from "@/lib/audition/curve-merge";
import { AuditionPlayer, SAFE_START_DB } from "@/lib/audition/player";
import { type Spectrum, throughCurve, welchSpectrum } from "@/lib/audition/spectrum";
import {
  type AudioWindow,
  type OpenedTransfer,
  openTransfer,
  overviewPeaks,
  readWindow,
} from "@/lib/audition/transfer-window";
import { describeCurve } from "@/lib/curves";
import { fetchJson } from "@/lib/http/client";
import { formatDuration } from "./progress-bar";
import { VolumeControl } from "./volume-control";
import { candidateColor, FLAT_COLOR, type SpectrumLine, SpectrumPlot } from "./spectrum-plot";
import type { Candidate, TransferJson } from "./types";

const WINDOW_SECONDS = 30;

/**
 * What an engineer compared by ear, as evidence for the curve they record from here: the
 * transfer (file and SHA-256), the stretch listened to, the channel choice, every curve
 * heard, and the one chosen.
 */
export function listeningEvidence(o: {
  transfer: Pick<TransferJson, "fileName" | "sha256">;
  fromSeconds: number;
  toSeconds: number;
  channelMode: ChannelMode;
  compared: string[];
  chosen: string;
}): string {
  return [
    `Compared by ear on the flat transfer ${o.transfer.fileName} (SHA-256 ${o.transfer.sha256.slice(0, 16)}…), ` +
      `${formatDuration(o.fromSeconds)}–${formatDuration(o.toSeconds)}, ${channelModeLabels[o.channelMode].toLowerCase()}, ` +
      `at matched level at 1 kHz.`,
    `Heard: flat; ${o.compared.join("; ")}.`,
    `Chosen: ${o.chosen}.`,
  ].join(" ");
}

export function AuditionPanel({
  transfer,
  candidates,
  channelMode,
  onChannelMode,
  channelWhy,
  onRecord,
}: {
  transfer: TransferJson | null;
  candidates: Candidate[];
  channelMode: ChannelMode;
  onChannelMode: (m: ChannelMode) => void;
  channelWhy: string;
  /** Offered on the bench: take the curve being heard to the choice form, with what was compared as its evidence. Listening itself records nothing. */
  onRecord?: (candidateId: string, evidence: string) => void;
}) {
  const uid = useId();
  const [acknowledged, setAcknowledged] = useState(false);
  const [startAt, setStartAt] = useState(0);
  const [volumeDb, setVolumeDb] = useState(SAFE_START_DB);
  const [activeId, setActiveId] = useState("flat");
  const [playing, setPlaying] = useState(false);
  const [contextState, setContextState] = useState<string>("none");
  const [clock, setClock] = useState(0);
  const [guardDb, setGuardDb] = useState(0);
  const [playError, setPlayError] = useState<string | null>(null);
  const playerRef = useRef<AuditionPlayer | null>(null);
  const loadedRef = useRef<AudioWindow | null>(null);

  // The presigned URL, the header (a few ranged reads) and the level overview.
  const opened = useQuery({
    queryKey: ["transfer-open", transfer?.id],
    enabled: !!transfer,
    staleTime: 4 * 60_000,
    queryFn: async (): Promise<OpenedTransfer> => {
      const { url } = await fetchJson<{ url: string }>(`/api/transfers/${transfer!.id}/download?json=1`);
      return openTransfer(url, Number(transfer!.bytes));
    },
  });
  const overview = useQuery({
    queryKey: ["transfer-overview", transfer?.id],
    enabled: !!opened.data,
    staleTime: Infinity,
    queryFn: () => overviewPeaks(opened.data!),
  });
  const duration = opened.data?.header.durationSeconds ?? Number(transfer?.durationSeconds ?? 0);
  const win = useQuery({
    queryKey: ["transfer-window", transfer?.id, startAt, channelMode],
    enabled: !!opened.data,
    staleTime: Infinity,
    queryFn: () => readWindow(opened.data!, startAt, WINDOW_SECONDS, channelMode),
  });

  // Spectra: flat once per window, then each candidate by multiplying with |H(f)|.
  const flatSpectrum = useMemo<Spectrum | null>(() => {
    const w = win.data;
    if (!w) return null;
    let mono = w.channels[0];
    if (w.channels.length === 2) {
      mono = new Float32Array(w.channels[0].length);
      for (let i = 0; i < mono.length; i++) mono[i] = (w.channels[0][i] + w.channels[1][i]) / 2;
    }
    return welchSpectrum(mono, w.sampleRateHz);
  }, [win.data]);
  const lines = useMemo<SpectrumLine[]>(() => {
    if (!flatSpectrum) return [];
    const out: SpectrumLine[] = [{ id: "flat", label: "Flat", spectrum: flatSpectrum, color: FLAT_COLOR }];
    candidates.forEach((c, i) => {
      try {
        out.push({
          id: c.id,
          label: c.label,
          spectrum: throughCurve(flatSpectrum, c.spec, matchAt1kHzDb(c.spec)),
          color: candidateColor(i),
        });
      } catch {
        /* an invalid curve is reported by the form */
      }
    });
    return out;
  }, [flatSpectrum, candidates]);

  const peakBoost = useMemo(
    () =>
      Math.max(
        0,
        ...candidates.map((c) => {
          try {
            return describeCurve(c.spec).peakGainDb + matchAt1kHzDb(c.spec);
          } catch {
            return 0;
          }
        }),
      ),
    [candidates],
  );

  // Keep the player's chains in step with the candidates.
  const candidateKey = JSON.stringify(candidates.map((c) => [c.id, c.spec]));
  useEffect(() => {
    const p = playerRef.current;
    if (!p) return;
    try {
      p.setCandidates(candidates);
      // The player is outside React: what it answers to the new chains is shown once it has them.
      // eslint-disable-next-line react-hooks/set-state-in-effect -- reports the outside player's answer
      setPlayError(null);
    } catch (err) {
      setPlayError(err instanceof Error ? err.message : String(err));
    }
    if (!candidates.some((c) => c.id === activeId)) setActiveId("flat");
    // candidateKey stands for the candidates' ids and curves; a new array with the same ones changes nothing.
    // eslint-disable-next-line react-hooks/exhaustive-deps -- candidateKey stands for the candidates
  }, [candidateKey]);

  useEffect(() => () => void playerRef.current?.close(), []);
  // A different transfer may have another sample rate: start a fresh player for it.
  useEffect(() => {
    const p = playerRef.current;
    if (p && opened.data && p.ctx.sampleRate !== opened.data.header.sampleRateHz) {
      void p.close();
      playerRef.current = null;
      loadedRef.current = null;
      setPlaying(false);
      setContextState("none");
    }
  }, [opened.data]);

  // Position readout while playing.
  useEffect(() => {
    if (!playing) return;
    let raf = 0;
    const tick = () => {
      const p = playerRef.current;
      if (p) {
        setClock(p.position());
        setGuardDb(p.guardReductionDb);
      }
      raf = requestAnimationFrame(tick);
    };
    raf = requestAnimationFrame(tick);
    return () => cancelAnimationFrame(raf);
  }, [playing]);

  const ensurePlayer = useCallback((): AuditionPlayer | null => {
    if (!opened.data) return null;
    let p = playerRef.current;
    if (!p) {
      p = new AuditionPlayer(opened.data.header.sampleRateHz);
      p.setVolumeDb(volumeDb);
      p.onEnded = () => setPlaying(false);
      p.ctx.onstatechange = () => setContextState(p!.ctx.state);
      p.setCandidates(candidates);
      p.select(activeId);
      playerRef.current = p;
    }
    return p;
  }, [opened.data, volumeDb, candidates, activeId]);

  const play = async () => {
    setPlayError(null);
    try {
      const p = ensurePlayer();
      if (!p || !win.data) return;
      if (loadedRef.current !== win.data) {
        p.load(win.data);
        loadedRef.current = win.data;
      }
      await p.play();
      setContextState(p.ctx.state);
      setPlaying(true);
    } catch (err) {
      setPlayError(err instanceof Error ? err.message : String(err));
    }
  };
  const pause = () => {
    playerRef.current?.pause();
    setPlaying(false);
  };
  const choose = (id: string) => {
    setActiveId(id);
    playerRef.current?.select(id);
  };
  const moveTo = (seconds: number) => {
    const s = Math.max(0, Math.min(Math.max(0, duration - 1), seconds));
    playerRef.current?.pause();
    setPlaying(false);
    loadedRef.current = null;
    setClock(0);
    setStartAt(Math.round(s * 10) / 10);
  };
  // Start playing the new window once it has arrived, if the engineer asked for it by clicking the overview.
  const [autoPlay, setAutoPlay] = useState(false);
  useEffect(() => {
    if (autoPlay && win.data && acknowledged) {
      // eslint-disable-next-line react-hooks/set-state-in-effect -- one play per click, started once the window has arrived
      setAutoPlay(false);
      void play();
    }
    // eslint-disable-next-line react-hooks/exhaustive-deps -- runs when the asked-for window arrives, not when play's closure changes
  }, [autoPlay, win.data]);

  const options = [
    { id: "flat", label: "Flat (no curve)" },
    ...candidates.map((c) => ({ id: c.id, label: c.label })),
  ];
  const onCandidateKeys = (e: KeyboardEvent) => {
    const n = Number(e.key);
    if (Number.isInteger(n) && n >= 0 && n < options.length) {
      e.preventDefault();
      choose(options[n].id);
    }
  };
  const activeLabel = options.find((o) => o.id === activeId)?.label ?? "Flat";
  const nowSeconds = (win.data?.startSeconds ?? startAt) + clock;

  if (!transfer)
    return (
      <p className="text-sm text-ink-faint">
        Upload a flat transfer to listen to it through the candidate curves.
      </p>
    );

  return (
    <div className="space-y-5" data-testid="audition-panel" onKeyDown={onCandidateKeys}>
      <Notice tone="caution" title="Mind your ears" testId="audition-caution">
        <p>
          These curves can add a lot of bass:{" "}
          {peakBoost > 0.5 ? (
            <>
              the candidates here reach up to <strong>{formatDb(peakBoost)}</strong> above their 1 kHz level
            </>
          ) : (
            "some add 20 dB and more below 100 Hz"
          )}
          , and rumble gets the same boost. In headphones that can be very loud. The player starts at{" "}
          {SAFE_START_DB} dB and a peak guard holds its output down; raise the volume slowly.
        </p>
        {!acknowledged ? (
          <Button
            type="button"
            size="sm"
            className="mt-2"
            onClick={() => setAcknowledged(true)}
            data-testid="audition-acknowledge"
          >
            Understood — enable the player
          </Button>
        ) : null}
      </Notice>

      <div className="space-y-2">
        <div className="flex items-baseline justify-between gap-3">
          <h3 className="font-sans text-sm font-semibold">Where to listen</h3>
          <span className="font-mono text-xs text-ink-soft">
            {formatDuration(startAt)}–{formatDuration(Math.min(duration, startAt + WINDOW_SECONDS))} of{" "}
            {formatDuration(duration)}
          </span>
        </div>
        <Overview
          peaks={overview.data ?? null}
          duration={duration}
          windowStart={win.data?.startSeconds ?? startAt}
          windowSeconds={Math.min(WINDOW_SECONDS, duration)}
          now={playing ? nowSeconds : null}
          onPick={(s) => {
            moveTo(s);
            if (acknowledged) setAutoPlay(true);
          }}
        />
        <label htmlFor={`${uid}-start`} className="sr-only">
          Listen from (seconds into the side)
        </label>
        <input
          id={`${uid}-start`}
          type="range"
          min={0}
          max={Math.max(0, Math.floor(duration))}
          step={1}
          value={Math.floor(startAt)}
          onChange={(e) => moveTo(Number(e.target.value))}
          className="w-full accent-[#2f6f6a]"
          aria-valuetext={`${formatDuration(startAt)} into the side`}
          data-testid="audition-start"
        />
        {opened.error || overview.error || win.error ? (
          <p role="alert" className="text-xs font-medium text-alarm">
            Could not read the flat transfer: {(opened.error ?? overview.error ?? win.error)!.message}
          </p>
        ) : null}
      </div>

      <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_16rem]">
        <fieldset className="min-w-0 space-y-1.5">
          <legend className="text-sm font-semibold">Listen through</legend>
          <p className="text-xs text-ink-faint">
            Switching keeps playing. Keys 0–{options.length - 1} switch too.
          </p>
          <div
            className="grid gap-1.5"
            role="radiogroup"
            aria-label="Listen through"
            data-testid="audition-candidates"
          >
            {options.map((o, i) => (
              <label
                key={o.id}
                className={cx(
                  "flex min-w-0 cursor-pointer items-center gap-2 rounded-md border px-3 py-2 text-sm " +
                    "has-[:focus-visible]:outline has-[:focus-visible]:outline-2 has-[:focus-visible]:outline-shellac",
                  activeId === o.id
                    ? "border-groove bg-groove-wash font-semibold"
                    : "border-paper-edge bg-white",
                )}
              >
                <input
                  type="radio"
                  name={`${uid}-cand`}
                  className="sr-only"
                  checked={activeId === o.id}
                  onChange={() => choose(o.id)}
                  data-testid={`audition-candidate-${i}`}
                />
                <span
                  aria-hidden
                  className="inline-block h-3 w-3 shrink-0 rounded-full"
                  style={{ background: o.id === "flat" ? FLAT_COLOR : candidateColor(i - 1) }}
                />
                <span className="font-mono text-xs text-ink-faint">{i}</span>
                <span className="min-w-0 break-words leading-snug">{o.label}</span>
              </label>
            ))}
          </div>
        </fieldset>
        <div className="space-y-3">
          <label className="block text-sm font-semibold" htmlFor={`${uid}-mode`}>
            Channels
          </label>
          <select
            id={`${uid}-mode`}
            value={channelMode}
            onChange={(e) => onChannelMode(e.target.value as ChannelMode)}
            className="h-9 w-full rounded-md border border-paper-edge bg-white px-2 text-sm"
            data-testid="audition-channel-mode"
          >
            {(Number(transfer.channels) === 2 ? channelModes : (["both"] as const)).map((m) => (
              <option key={m} value={m}>
                {channelModeLabels[m]}
              </option>
            ))}
          </select>
          <p className="text-xs text-ink-faint">{channelWhy}</p>
        </div>
      </div>

      <div className="flex flex-wrap items-center gap-4 rounded-lg border border-paper-edge bg-white px-4 py-3">
        {playing ? (
          <Button type="button" variant="secondary" onClick={pause} data-testid="audition-pause">
            Pause
          </Button>
        ) : (
          <Button
            type="button"
            onClick={() => void play()}
            disabled={!acknowledged || !win.data}
            data-testid="audition-play"
          >
            {win.isFetching ? "Fetching…" : "Play"}
          </Button>
        )}
        <div className="min-w-40 font-mono text-sm" aria-live="off">
          {formatDuration(nowSeconds)}
        </div>
        <p
          className="text-sm"
          data-testid="audition-state"
          data-context-state={contextState}
          data-active={activeId}
          aria-live="polite"
        >
          {playing ? "Playing" : "Stopped"} · <span className="font-semibold">{activeLabel}</span>
        </p>
        <div className="ml-auto flex items-center gap-2">
          <VolumeControl
            valueDb={volumeDb}
            onChange={(v) => {
              setVolumeDb(v);
              playerRef.current?.setVolumeDb(v);
            }}
            testId="audition-volume"
          />
          <span
            className={cx(
              "rounded px-1.5 py-0.5 text-[0.7rem] font-medium",
              guardDb < -1 ? "bg-shellac-wash text-shellac-deep" : "bg-paper-deep text-ink-faint",
            )}
            title="How much the peak guard is holding back"
          >
            guard {guardDb < -0.1 ? `${guardDb.toFixed(0)} dB` : "idle"}
          </span>
        </div>
      </div>
      {onRecord ? (
        <div className="flex flex-wrap items-center justify-between gap-3 rounded-lg border border-dashed border-groove/50 px-4 py-3">
          <p className="text-sm text-ink-soft">
            {activeId === "flat" ? (
              "Pick the curve that sounds right, then record it with what you compared."
            ) : (
              <>
                Record <span className="font-semibold text-ink">{activeLabel}</span> as this side&apos;s
                curve? The form below is filled in with what you compared; you can edit it before saving.
              </>
            )}
          </p>
          <Button
            type="button"
            variant="secondary"
            disabled={activeId === "flat"}
            data-testid="audition-record"
            onClick={() =>
              onRecord(
                activeId,
                listeningEvidence({
                  transfer,
                  fromSeconds: win.data?.startSeconds ?? startAt,
                  toSeconds: Math.min(duration, (win.data?.startSeconds ?? startAt) + WINDOW_SECONDS),
                  channelMode,
                  compared: candidates.map((c) => c.label),
                  chosen: activeLabel,
                }),
              )
            }
          >
            Use this curve…
          </Button>
        </div>
      ) : null}
      {playError ? (
        <Notice tone="error" title="The player could not start">
          {playError}
        </Notice>
      ) : null}

      <div>
        <h3 className="mb-2 font-sans text-sm font-semibold">Averaged spectrum of this window</h3>
        {lines.length ? (
          <SpectrumPlot lines={lines} activeId={activeId} />
        ) : (
          <p className="text-sm text-ink-faint">
            {win.isFetching || opened.isFetching ? "Reading the window…" : "—"}
          </p>
        )}
      </div>
    </div>
  );
}

/** Peak levels across the whole side; click (or use the slider under it) to listen from there. */
function Overview({
  peaks,
  duration,
  windowStart,
  windowSeconds,
  now,
  onPick,
}: {
  peaks: Float32Array | null;
  duration: number;
  windowStart: number;
  windowSeconds: number;
  now: number | null;
  onPick: (seconds: number) => void;
}) {
  const W = 1000;
  const H = 72;
  if (!peaks)
    return (
      <div
        className="h-[72px] animate-pulse rounded-md bg-paper-deep"
        aria-label="Reading levels across the side…"
      />
    );
  const bar = W / peaks.length;
  const h = (db: number) => Math.max(1, ((Math.max(-60, db) + 60) / 60) * (H / 2 - 2));
  const xOf = (s: number) => (duration > 0 ? (s / duration) * W : 0);
  return (
    <svg
      viewBox={`0 0 ${W} ${H}`}
      preserveAspectRatio="none"
      className="block h-[72px] w-full cursor-pointer rounded-md border border-paper-edge bg-[#fffdf8]"
      role="img"
      aria-label="Peak levels across the side. Click to listen from a place; the slider below does the same from the keyboard."
      data-testid="audition-overview"
      onClick={(e) => {
        const r = e.currentTarget.getBoundingClientRect();
        onPick(((e.clientX - r.left) / r.width) * duration);
      }}
    >
      <rect x={xOf(windowStart)} width={Math.max(2, xOf(windowSeconds))} height={H} fill="#dcebe8" />
      {Array.from(peaks, (db, i) => (
        <rect
          key={i}
          x={i * bar + bar * 0.15}
          width={bar * 0.7}
          y={H / 2 - h(db)}
          height={2 * h(db)}
          fill="#2f6f6a"
          fillOpacity={0.8}
        />
      ))}
      {now !== null ? <line x1={xOf(now)} x2={xOf(now)} y2={H} stroke="#a9591a" strokeWidth={2} /> : null}
    </svg>
  );
}
