import { analogModel, analogResponse, describeCurve, designRenderFilter } from "@/lib/curves";
import { curveErrorToAppError } from "@/lib/http/curve-errors";
import { route } from "@/lib/http/route";
import { responseRequestSchema } from "@/lib/validation/curves";

export const dynamic = "force-dynamic";

/** A curve and a sample rate → poles, zeros, K, the response table, asymptotes, peak gain and the digital filters. */
export const POST = route("POST /api/curves/response", async (req) => {
  const { spec, sampleRateHz, frequenciesHz, renderFilter } = responseRequestSchema.parse(
    await req.json().catch(() => ({})),
  );
  try {
    const description = describeCurve(spec, sampleRateHz);
    const freqs = frequenciesHz ?? [20, 50, 100, 200, 500, 1000, 2000, 5000, 10_000, 20_000];
    const r = analogResponse(analogModel(spec), freqs);
    const table = freqs.map((hz, i) => ({ hz, db: r.gainDb[i], phaseDeg: r.phaseDeg[i] }));
    const render = renderFilter ? designRenderFilter(spec, sampleRateHz) : undefined;
    return {
      ...description,
      sampleRateHz,
      response: table,
      renderFilter: render ? { ...render, taps: Array.from(render.taps) } : undefined,
    };
  } catch (err) {
    throw curveErrorToAppError(err);
  }
});
