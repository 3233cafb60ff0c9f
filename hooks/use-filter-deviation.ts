"use client";
import { useEffect, useRef, useState } from "react";
import { CurveError, type CurveSpec, type FilterDeviations, filterDeviations } from "@/lib/curves";

export interface DeviationRequest {
  id: number;
  spec: CurveSpec;
  sampleRateHz: number;
}

export type DeviationResponse =
  | { id: number; ok: true; result: FilterDeviations; ms: number }
  | { id: number; ok: false; message: string; parameter: string | null };

export interface FilterDeviationState {
  result: FilterDeviations | null;
  error: string | null;
  /** True while a newer curve or rate is being worked out; `result` is then the previous one. */
  pending: boolean;
  /** How long the last answer took to work out (ms), and where. */
  ms: number | null;
  where: "worker" | "page" | null;
}

/**
 * Both digital filters' deviation for a curve at a sample rate, worked out in a web
 * worker (components/curves/deviation.worker.ts) so the page stays responsive; on the
 * page itself if the browser cannot start the worker. Only the newest request's answer
 * is kept.
 */
export function useFilterDeviation(spec: CurveSpec, sampleRateHz: number): FilterDeviationState {
  const [state, setState] = useState<FilterDeviationState>({
    result: null,
    error: null,
    pending: true,
    ms: null,
    where: null,
  });
  const worker = useRef<Worker | null>(null);
  const broken = useRef(false);
  const latest = useRef(0);
  const lastRequest = useRef<DeviationRequest | null>(null);

  const onPage = (req: DeviationRequest) => {
    // Let the browser paint the "working" state before a long design.
    setTimeout(() => {
      if (req.id !== latest.current) return;
      const started = performance.now();
      try {
        const result = filterDeviations(req.spec, req.sampleRateHz);
        setState({ result, error: null, pending: false, ms: performance.now() - started, where: "page" });
      } catch (err) {
        setState((s) => ({
          ...s,
          error: err instanceof CurveError || err instanceof Error ? err.message : String(err),
          pending: false,
        }));
      }
    }, 0);
  };

  useEffect(() => {
    if (typeof Worker === "undefined") {
      broken.current = true;
      return;
    }
    let w: Worker;
    try {
      w = new Worker(new URL("../components/curves/deviation.worker.ts", import.meta.url), {
        type: "module",
      });
    } catch {
      broken.current = true;
      return;
    }
    w.onmessage = (e: MessageEvent<DeviationResponse>) => {
      const m = e.data;
      if (m.id !== latest.current) return;
      if (m.ok) setState({ result: m.result, error: null, pending: false, ms: m.ms, where: "worker" });
      else setState((s) => ({ ...s, error: m.message, pending: false }));
    };
    w.onerror = (e) => {
      // A worker that cannot load: work on the page instead, starting with the request it lost.
      e.preventDefault();
      broken.current = true;
      w.terminate();
      worker.current = null;
      if (lastRequest.current) onPage(lastRequest.current);
    };
    worker.current = w;
    if (lastRequest.current) w.postMessage(lastRequest.current);
    return () => {
      w.terminate();
      worker.current = null;
    };
  }, []);

  useEffect(() => {
    const req: DeviationRequest = { id: ++latest.current, spec, sampleRateHz };
    lastRequest.current = req;
    setState((s) => ({ ...s, pending: true }));
    if (worker.current) worker.current.postMessage(req);
    else if (broken.current) onPage(req);
    // else: the worker effect sends lastRequest once the worker exists.
  }, [spec, sampleRateHz]);

  return state;
}
