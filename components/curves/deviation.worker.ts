/**
 * Works out both digital filters' deviation from the analog curve off the page's thread:
 * designing the access-copy FIR takes 50–400 ms (longer at high rates and with a slow
 * high-pass), which would stall typing in the corner fields.
 */
import { CurveError, filterDeviations } from "@/lib/curves";
import type { DeviationRequest, DeviationResponse } from "@/hooks/use-filter-deviation";

// The page's lib types this file as a window; a dedicated worker only needs these two.
const scope = self as unknown as {
  onmessage: ((e: MessageEvent<DeviationRequest>) => void) | null;
  postMessage(message: DeviationResponse): void;
};

scope.onmessage = (e) => {
  const { id, spec, sampleRateHz } = e.data;
  const started = performance.now();
  try {
    const result = filterDeviations(spec, sampleRateHz);
    scope.postMessage({ id, ok: true, result, ms: performance.now() - started });
  } catch (err) {
    scope.postMessage({
      id,
      ok: false,
      message: err instanceof Error ? err.message : String(err),
      parameter: err instanceof CurveError ? err.parameter : null,
    });
  }
};
