// The workbench's digital filter panel: the access-copy FIR is the one the render job
// builds, and its deviation is told apart from the listening preview's IIR sections.
import { describe, expect, it } from "vitest";
import {
  buildAnalogModel,
  designIirFromModel,
  designRenderFilterFromModel,
  filterDeviations,
  RENDER_TARGET_DB,
  RENDER_TARGET_DEG,
  resolveCurve,
  RIAA_SPEC,
} from "@/lib/curves";
import type { CurveSpec } from "@/lib/curves";

const turnover500: CurveSpec = {
  turnover: { unit: "hz", value: 500 },
  highpass: { unit: "us", value: 7950 },
  rolloff: { unit: "db10k", value: -10 },
};

describe("filter deviations for the workbench", () => {
  it.each([
    ["RIAA", 44_100, RIAA_SPEC],
    ["turnover 500 Hz with a high-pass", 96_000, turnover500],
  ] as [string, number, CurveSpec][])(
    "%s at %i Hz: the FIR is the render job's, within the render targets; the sections are the preview's",
    (_name, fs, spec) => {
      const dev = filterDeviations(spec, fs);
      // The same design the render job runs (lib/jobs/render-job.ts: designRenderFilterFromModel at the transfer's rate).
      const model = buildAnalogModel(resolveCurve(spec));
      const render = designRenderFilterFromModel(model, fs);
      expect(dev.fir.taps).toBe(render.taps.length);
      expect(dev.fir.delaySamples).toBe(render.delaySamples);
      expect(dev.fir.reportedDb).toBe(render.maxErrorDb);
      // The plotted points are bins of the same zero-padded FFT the designer measures on, so they cannot exceed its worst by much.
      expect(Math.abs(dev.fir.worstDb)).toBeLessThanOrEqual(Math.max(render.maxErrorDb * 1.5, 1e-9));
      expect(Math.abs(dev.fir.worstDb)).toBeLessThan(RENDER_TARGET_DB);
      expect(Math.abs(dev.fir.worstDeg)).toBeLessThan(RENDER_TARGET_DEG);
      const iir = designIirFromModel(model, fs);
      expect(dev.iir.sections).toBe(iir.sos.length);
      expect(dev.iir.reportedDeg).toBe(iir.maxPhaseErrorDeg);
      expect(dev.fir.hz[0]).toBeGreaterThanOrEqual(20);
      expect(dev.fir.hz[dev.fir.hz.length - 1]).toBeLessThanOrEqual(20_000);
    },
  );

  it("shows at 44.1 kHz why renders use the FIR: the preview's phase strays by degrees near 20 kHz, the FIR's by far less", () => {
    const dev = filterDeviations(RIAA_SPEC, 44_100);
    expect(Math.abs(dev.iir.worstDeg)).toBeGreaterThan(1);
    expect(dev.iir.worstDegHz).toBeGreaterThan(10_000);
    expect(Math.abs(dev.fir.worstDeg)).toBeLessThan(Math.abs(dev.iir.worstDeg) / 100);
  });
});
