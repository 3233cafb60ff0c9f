import { z } from "zod";
import { emptyFileMessage } from "./text";

/** Label images up to 512 MiB: a 1200 dpi 48-bit TIFF scan of a 12-inch label stays well within it. */
export const maxLabelImageBytes = 512 * 1024 ** 2;

export const labelImageTypes = {
  "image/jpeg": "jpeg",
  "image/png": "png",
  "image/tiff": "tiff",
} as const;

export type LabelImageType = keyof typeof labelImageTypes;

export const labelImageKindWords = { label: "label", sleeve: "sleeve" } as const;

export const startLabelImageSchema = z
  .object({
    kind: z.enum(["label", "sleeve"], { error: "Say whether it shows a side's label or the sleeve." }),
    sideId: z.uuid({ error: "Choose the side whose label it shows." }).optional(),
    fileName: z
      .string()
      .trim()
      .min(1, "The file has no name.")
      .max(255, "The file's name is over 255 characters: rename it.")
      .refine(
        (v) => !/[\u0000-\u001f\u007f]/.test(v),
        "The file's name holds a control character: rename it.",
      ),
    bytes: z.coerce
      .number()
      .int()
      .positive(emptyFileMessage)
      .max(maxLabelImageBytes, "Label images over 512 MiB are not accepted."),
    contentType: z.enum(Object.keys(labelImageTypes) as [LabelImageType, ...LabelImageType[]], {
      error: "Label images are JPEG, PNG or TIFF files.",
    }),
  })
  .superRefine((v, ctx) => {
    if (v.kind === "label" && !v.sideId)
      ctx.addIssue({ code: "custom", path: ["sideId"], message: "Choose the side whose label it shows." });
    if (v.kind === "sleeve" && v.sideId)
      ctx.addIssue({
        code: "custom",
        path: ["sideId"],
        message: "A sleeve belongs to the disc, not to a side.",
      });
  });

export const completeLabelImageSchema = z.object({
  sha256: z.string().regex(/^[0-9a-f]{64}$/, "The SHA-256 must be 64 lower-case hex digits."),
});

export const withdrawLabelImageSchema = z.object({
  reason: z
    .string({ error: "Say why the image is withdrawn." })
    .trim()
    .min(1, "Say why the image is withdrawn (the wrong disc, the wrong side, a blurred shot…).")
    .max(1000, "Keep the reason under 1 000 characters."),
});
