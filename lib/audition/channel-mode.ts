import type { ChannelMode } from "@/lib/audio/channel-mode";

/**
 * The channel choice a disc's cut suggests for a stereo transfer of a mono disc:
 * a lateral cut moves the stylus sideways, which a stereo cartridge reads in
 * phase on both channels (sum them); a vertical (hill-and-dale) cut reads in
 * opposite phase (take the difference). Mono transfers have one channel to keep.
 */
export function defaultChannelMode(
  cut: "lateral" | "vertical",
  channels: number,
): { mode: ChannelMode; why: string } {
  if (channels !== 2) return { mode: "both", why: "The transfer is mono: its one channel is kept." };
  if (cut === "vertical") {
    return {
      mode: "difference",
      why:
        "Vertical (hill-and-dale) cut: the groove's motion comes out in opposite phase " +
        "on the two channels, so their difference carries the recording and their sum mostly noise.",
    };
  }
  return {
    mode: "sum",
    why:
      "Lateral cut: the groove's motion comes out in phase on the two channels, so their " +
      "sum carries the recording and cancels some vertical rumble and noise.",
  };
}
