/**
 * The channel choice of a render and of the bench's listening, in one place (no
 * node: imports, so the browser uses it too). A stereo pickup records each groove
 * wall; a lateral cut reads in phase on both (keep their mean), a vertical cut in
 * opposite phase (keep half their difference), or one wall may be kept alone.
 */
export const channelModes = ["both", "sum", "difference", "left", "right"] as const;
export type ChannelMode = (typeof channelModes)[number];

/** What the bench, the review and the provenance log call each mode. */
export const channelModeLabels: Record<ChannelMode, string> = {
  both: "Keep both channels",
  sum: "Sum (lateral cut)",
  difference: "Difference (vertical cut)",
  left: "Left groove wall only",
  right: "Right groove wall only",
};

/**
 * The terser words a render writes into the access copy's coding history and its errors:
 * they stay as they are, so the history of files rendered earlier reads the same.
 */
export const CHANNEL_MODE_TEXT: Record<ChannelMode, string> = {
  both: "both channels",
  sum: "lateral (L+R)/2",
  difference: "vertical (L-R)/2",
  left: "left groove wall",
  right: "right groove wall",
};

/** The mono result of `n` interleaved stereo frames of `input` under `mode`, into `dst`. */
export function mixToMono(
  mode: Exclude<ChannelMode, "both">,
  input: ArrayLike<number>,
  n: number,
  dst: Float64Array | Float32Array,
): void {
  if (mode === "sum") for (let i = 0; i < n; i++) dst[i] = 0.5 * (input[2 * i] + input[2 * i + 1]);
  else if (mode === "difference")
    for (let i = 0; i < n; i++) dst[i] = 0.5 * (input[2 * i] - input[2 * i + 1]);
  else for (let i = 0, o = mode === "left" ? 0 : 1; i < n; i++, o += 2) dst[i] = input[o];
}
