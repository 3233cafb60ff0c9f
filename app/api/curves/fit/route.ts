import { fitCurve } from "@/lib/curves";
import { curveErrorToAppError } from "@/lib/http/curve-errors";
import { route } from "@/lib/http/route";
import { fitRequestSchema } from "@/lib/validation/curves";

export const dynamic = "force-dynamic";

/** Fits the chosen parameters to (Hz, dB) points; answers 422 when the points cannot determine them. */
export const POST = route("POST /api/curves/fit", async (req) => {
  const body = fitRequestSchema.parse(await req.json().catch(() => ({})));
  try {
    return {
      fit: fitCurve({
        points: body.points,
        kind: body.kind,
        fit: body.fit,
        initial: body.initial,
        levelOffsetDb: body.levelOffsetDb,
      }),
    };
  } catch (err) {
    throw curveErrorToAppError(err, "fit");
  }
});
