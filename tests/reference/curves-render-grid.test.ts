import { describe, expect, it } from "vitest";
import { designRenderFilter, RENDER_TARGET_DB, RENDER_TARGET_DEG } from "@/lib/curves";
import { runPython } from "../support/python";
import { COMMON_RATES_HZ, curveGrid } from "./curve-grid";

describe("render filter over the curve grid × common rates", () => {
  const curves = curveGrid();

  for (const fs of COMMON_RATES_HZ) {
    it(`matches magnitude and phase at ${fs} Hz, measured by scipy.signal.freqz`, async () => {
      const filters = curves.map((c) => designRenderFilter(c.spec, fs));
      const total = filters.reduce((s, f) => s + f.taps.length, 0);
      const taps = new Float64Array(total);
      let offset = 0;
      const meta = curves.map((c, i) => {
        const f = filters[i];
        taps.set(f.taps, offset);
        const m = { ...c.taus, fs, delay: f.delaySamples, offset, length: f.taps.length };
        offset += f.taps.length;
        return m;
      });
      // Source: scipy.signal.freqz of the taps on 8 × taps points (2× denser than
      // lib/curves' own 4× zero-padded FFT), delay removed, against
      // scipy.signal.freqs_zpk of the analog model (py/fir_grid.py).
      const ref = await runPython<{ maxErrorDb: number; maxPhaseErrorDeg: number; points: number }[]>(
        "fir_grid.py",
        { curves: meta },
        { taps },
      );
      let worstDb = 0;
      let worstDeg = 0;
      curves.forEach((c, i) => {
        const f = filters[i];
        const m = ref[i];
        expect(Number.isInteger(f.delaySamples)).toBe(true);
        expect(m.maxErrorDb, `${c.label} @ ${fs}`).toBeLessThanOrEqual(RENDER_TARGET_DB);
        expect(m.maxPhaseErrorDeg, `${c.label} @ ${fs}`).toBeLessThanOrEqual(RENDER_TARGET_DEG);
        // Reported = measured: the FIR response is band-limited to a time span of
        // `taps` samples, so between points of a 4× oversampled grid it cannot
        // swing far; 1e-4 dB and 1e-3° (2 % and 0.2 % of the targets) cover it.
        expect(Math.abs(f.maxErrorDb - m.maxErrorDb), `${c.label} @ ${fs} reported dB`).toBeLessThanOrEqual(
          1e-4,
        );
        expect(
          Math.abs(f.maxPhaseErrorDeg - m.maxPhaseErrorDeg),
          `${c.label} @ ${fs} reported deg`,
        ).toBeLessThanOrEqual(1e-3);
        worstDb = Math.max(worstDb, m.maxErrorDb);
        worstDeg = Math.max(worstDeg, m.maxPhaseErrorDeg);
      });
      console.log(
        `render FIR ${fs} Hz: worst ${worstDb.toExponential(2)} dB, ${worstDeg.toExponential(2)}° ` +
          `over 20 Hz–20 kHz (${curves.length} curves, longest ${Math.max(...filters.map((f) => f.taps.length))} taps)`,
      );
    });
  }

  it("meets the targets at 384 kHz on the hardest bass cases", async () => {
    const hard = curves.filter(
      (c) => c.label.endsWith(" hp") || c.label.includes("shelf+hp") || c.label.startsWith("IEC"),
    );
    const picked = hard.filter((_, i) => i % 6 === 0);
    const filters = picked.map((c) => designRenderFilter(c.spec, 384_000));
    const taps = new Float64Array(filters.reduce((s, f) => s + f.taps.length, 0));
    let offset = 0;
    const meta = picked.map((c, i) => {
      taps.set(filters[i].taps, offset);
      const m = {
        ...c.taus,
        fs: 384_000,
        delay: filters[i].delaySamples,
        offset,
        length: filters[i].taps.length,
      };
      offset += filters[i].taps.length;
      return m;
    });
    // Source: scipy.signal.freqz / freqs_zpk as above.
    const ref = await runPython<{ maxErrorDb: number; maxPhaseErrorDeg: number }[]>(
      "fir_grid.py",
      { curves: meta },
      { taps },
    );
    ref.forEach((m, i) => {
      expect(m.maxErrorDb, picked[i].label).toBeLessThanOrEqual(RENDER_TARGET_DB);
      expect(m.maxPhaseErrorDeg, picked[i].label).toBeLessThanOrEqual(RENDER_TARGET_DEG);
    });
  });
});
