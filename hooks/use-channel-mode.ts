"use client";
/**
 * The channel mode the bench and the review listen and render with: what the person
 * chose, else the mode the access copy was rendered with, else what the disc's cut
 * suggests for the transfer (lib/audition/channel-mode.ts); and a sentence saying why.
 */
import { useState } from "react";
import type { ChannelMode } from "@/lib/audio/channel-mode";
import { defaultChannelMode } from "@/lib/audition/channel-mode";

export function useChannelMode({
  cut,
  channels,
  rendered,
}: {
  /** The disc's cut; unknown while the side loads. */
  cut: "lateral" | "vertical" | undefined;
  /** The transfer's channels; without a transfer yet, a stereo one is assumed. */
  channels: number | undefined;
  /** The mode of the access copy being heard, if any. */
  rendered?: ChannelMode | null;
}): { channelMode: ChannelMode; setChannelMode: (m: ChannelMode) => void; channelWhy: string } {
  const [chosen, setChannelMode] = useState<ChannelMode | null>(null);
  const suggestion = cut ? defaultChannelMode(cut, channels ?? 2) : null;
  const channelMode = chosen ?? rendered ?? suggestion?.mode ?? "both";
  const channelWhy =
    !chosen && rendered
      ? "As the access copy was rendered."
      : chosen && suggestion && chosen !== suggestion.mode
        ? `Changed from the suggestion (${suggestion.mode}). ${suggestion.why}`
        : (suggestion?.why ?? "");
  return { channelMode, setChannelMode, channelWhy };
}
