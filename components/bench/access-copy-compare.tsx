"use client";
/**
 * The access copy the server rendered, A/B against the flat transfer it was made from
 * played through the same curve in this browser: the same 30-second window of both,
 * started together, levelled to the same loudness at 1 kHz, switched without a gap.
 * A difference heard here is a difference between the two filters (or a damaged copy).
 * Listening only: nothing here changes the side.
 */
import { useQuery } from "@tanstack/react-query";
import { useEffect, useId, useRef, useState } from "react";
import { Button } from "@/components/ui/button";
import { cx } from "@/components/ui/cx";
import { Notice } from "@/components/ui/notice";
import type { ChannelMode } from "@/lib/audio/channel-mode";
import { matchAt1kHzDb } from "@/lib/audition/curve-merge";
import { AuditionPlayer, SAFE_START_DB } from "@/lib/audition/player";
import { openTransfer, readWindow } from "@/lib/audition/transfer-window";
import type { CurveSpec } from "@/lib/curves";
import { fetchJson } from "@/lib/http/client";
import { formatDuration } from "./progress-bar";
import { VolumeControl } from "./volume-control";
import type { TransferJson } from "./types";

const WINDOW_SECONDS = 30;

export interface ComparedRender {
  id: string;
  bytes: number | string | null;
  channelMode: ChannelMode;
  trimDb: number | string | null;
  /** The render's record: with `speedCorrection` when the copy plays at the cut speed. */
  filter?: { speedCorrection?: { factor: number; cutSpeedRpm: number; transferSpeedRpm: number } } | null;
}

type Side = "access" | "curve";

export function AccessCopyCompare({
  render,
  transfer,
  spec,
  curveLabel,
}: {
  render: ComparedRender;
  transfer: TransferJson;
  spec: CurveSpec;
  curveLabel: string;
}) {
  const uid = useId();
  const [acknowledged, setAcknowledged] = useState(false);
  const [startAt, setStartAt] = useState(0);
  const [active, setActive] = useState<Side>("access");
  const [playing, setPlaying] = useState(false);
  const [volumeDb, setVolumeDb] = useState(SAFE_START_DB);
  const [error, setError] = useState<string | null>(null);
  const playerRef = useRef<AuditionPlayer | null>(null);
  const loadedRef = useRef<string | null>(null);

  const files = useQuery({
    queryKey: ["access-compare-open", render.id, transfer.id],
    staleTime: 4 * 60_000,
    queryFn: async () => {
      const [t, a] = await Promise.all([
        fetchJson<{ url: string }>(`/api/transfers/${transfer.id}/download?json=1`),
        fetchJson<{ url: string }>(`/api/renders/${render.id}/download?json=1`),
      ]);
      const [flat, access] = await Promise.all([
        openTransfer(t.url, Number(transfer.bytes)),
        openTransfer(a.url, Number(render.bytes)),
      ]);
      return { flat, access };
    },
  });
  const duration = files.data
    ? Math.min(files.data.flat.header.durationSeconds, files.data.access.header.durationSeconds)
    : Number(transfer.durationSeconds);
  const windows = useQuery({
    queryKey: ["access-compare-window", render.id, transfer.id, startAt],
    enabled: !!files.data,
    staleTime: Infinity,
    queryFn: async () => {
      const { flat, access } = files.data!;
      // The flat transfer with the render's own channel choice; the access copy as it is.
      const [f, a] = await Promise.all([
        readWindow(flat, startAt, WINDOW_SECONDS, render.channelMode),
        readWindow(access, startAt, WINDOW_SECONDS, "both"),
      ]);
      return { flat: f, access: a };
    },
  });

  useEffect(() => () => void playerRef.current?.close(), []);

  const ensurePlayer = (): AuditionPlayer | null => {
    if (!files.data || !windows.data) return null;
    let p = playerRef.current;
    if (!p) {
      p = new AuditionPlayer(files.data.flat.header.sampleRateHz);
      p.setVolumeDb(volumeDb);
      p.onEnded = () => setPlaying(false);
      p.setCandidates([{ id: "curve", label: curveLabel, spec }]);
      playerRef.current = p;
    }
    const key = `${startAt}`;
    if (loadedRef.current !== key) {
      p.load(windows.data.flat);
      // The copy was rendered at 0 dB at the curve's reference and then trimmed: undo both to meet the curve path at 1 kHz.
      p.loadCompanion("access", windows.data.access, matchAt1kHzDb(spec) - Number(render.trimDb ?? 0));
      loadedRef.current = key;
    }
    p.select(active);
    return p;
  };

  const play = async () => {
    setError(null);
    try {
      const p = ensurePlayer();
      if (!p) return;
      await p.play();
      setPlaying(true);
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
    }
  };
  const pause = () => {
    playerRef.current?.pause();
    setPlaying(false);
  };
  const choose = (s: Side) => {
    setActive(s);
    playerRef.current?.select(s);
  };
  const moveTo = (seconds: number) => {
    pause();
    loadedRef.current = null;
    setStartAt(Math.max(0, Math.min(Math.max(0, Math.floor(duration - 1)), Math.round(seconds))));
  };

  const options: { id: Side; label: string; hint: string }[] = [
    { id: "access", label: "A · The access copy", hint: "rendered on the server" },
    {
      id: "curve",
      label: "B · The flat transfer through the chosen curve",
      hint: `in this browser: ${curveLabel}`,
    },
  ];

  return (
    <div className="space-y-3" data-testid="access-ab">
      {render.filter?.speedCorrection ? (
        <Notice tone="info" title="Speed corrected">
          <p data-testid="access-ab-speed">
            This copy plays at the cut speed, {render.filter.speedCorrection.factor.toFixed(4)} times the
            transfer&apos;s ({render.filter.speedCorrection.transferSpeedRpm} →{" "}
            {render.filter.speedCorrection.cutSpeedRpm} rpm): against the transfer through the curve it sounds
            higher and runs ahead. Compare the tone colour, not the pitch or the timing.
          </p>
        </Notice>
      ) : null}
      {!acknowledged ? (
        <Notice tone="caution" title="Mind your ears">
          <p>
            An equalized side can carry a lot of bass and surface noise. The player starts at {SAFE_START_DB}{" "}
            dB behind a peak guard; raise the volume slowly.
          </p>
          <Button
            type="button"
            size="sm"
            className="mt-2"
            onClick={() => setAcknowledged(true)}
            data-testid="access-ab-acknowledge"
          >
            Understood — enable the player
          </Button>
        </Notice>
      ) : null}
      <div className="grid gap-1.5 sm:grid-cols-2" role="radiogroup" aria-label="Listen to">
        {options.map((o) => (
          <label
            key={o.id}
            className={cx(
              "flex min-w-0 cursor-pointer flex-col rounded-md border px-3 py-2 text-sm has-[:focus-visible]:outline " +
                "has-[:focus-visible]:outline-2 has-[:focus-visible]:outline-shellac",
              active === o.id ? "border-groove bg-groove-wash" : "border-paper-edge bg-white",
            )}
          >
            <input
              type="radio"
              name={`${uid}-ab`}
              className="sr-only"
              checked={active === o.id}
              onChange={() => choose(o.id)}
              data-testid={`access-ab-option-${o.id}`}
            />
            <span className={cx(active === o.id && "font-semibold")}>{o.label}</span>
            <span className="truncate text-xs text-ink-faint" title={o.hint}>
              {o.hint}
            </span>
          </label>
        ))}
      </div>
      <div className="flex flex-wrap items-center gap-3 rounded-lg border border-paper-edge bg-white px-3 py-2">
        {playing ? (
          <Button type="button" variant="secondary" onClick={pause} data-testid="access-ab-pause">
            Pause
          </Button>
        ) : (
          <Button
            type="button"
            onClick={() => void play()}
            disabled={!acknowledged || !windows.data}
            data-testid="access-ab-play"
          >
            {windows.isFetching || files.isFetching ? "Fetching…" : "Play"}
          </Button>
        )}
        <p
          className="text-sm"
          data-testid="access-ab-state"
          data-active={active}
          data-playing={playing ? "yes" : "no"}
          aria-live="polite"
        >
          {playing ? "Playing" : "Stopped"} ·{" "}
          <span className="font-semibold">
            {active === "access" ? "A, the access copy" : "B, the flat transfer through the curve"}
          </span>
        </p>
        <div className="ml-auto flex items-center gap-2">
          <VolumeControl
            valueDb={volumeDb}
            onChange={(v) => {
              setVolumeDb(v);
              playerRef.current?.setVolumeDb(v);
            }}
          />
        </div>
      </div>
      <div className="flex items-center gap-3">
        <label htmlFor={`${uid}-start`} className="shrink-0 text-xs font-medium text-ink-soft">
          Listen from
        </label>
        <input
          id={`${uid}-start`}
          type="range"
          min={0}
          max={Math.max(0, Math.floor(duration - 1))}
          step={1}
          value={startAt}
          onChange={(e) => moveTo(Number(e.target.value))}
          className="w-full accent-[#2f6f6a]"
          aria-valuetext={`${formatDuration(startAt)} into the side`}
        />
        <span className="shrink-0 font-mono text-xs text-ink-soft">
          {formatDuration(startAt)}–{formatDuration(Math.min(duration, startAt + WINDOW_SECONDS))}
        </span>
      </div>
      {files.error || windows.error || error ? (
        <p role="alert" className="text-xs font-medium text-alarm">
          {error ?? `Could not read the files: ${(files.error ?? windows.error)!.message}`}
        </p>
      ) : null}
    </div>
  );
}
