/**
 * Throughput of the curve maths on this machine. Prints figures only.
 *   npx tsx scripts/bench/curves.ts
 */
import {
  analogModel,
  analogResponse,
  designIir,
  designRenderFilter,
  IEC_HIGHPASS_SPEC,
  logGrid,
  RIAA_SPEC,
  sosResponse,
} from "../../lib/curves";
import { StreamingConvolver } from "../../lib/audio/convolver";
import type { CurveSpec } from "../../lib/curves";

function timeIt(label: string, unit: string, fn: () => number, minMs = 1500): void {
  for (let i = 0; i < 5; i++) fn(); // warm up the JIT
  let count = 0;
  const t0 = performance.now();
  let elapsed = 0;
  while (elapsed < minMs) {
    count += fn();
    elapsed = performance.now() - t0;
  }
  const perSecond = (count / elapsed) * 1000;
  console.log(
    `${label.padEnd(58)} ${perSecond.toFixed(perSecond < 100 ? 1 : 0).padStart(12)} ${unit}/s  (${((elapsed / count) * 1000).toFixed(1)} µs each)`,
  );
}

const specs: [string, CurveSpec][] = [
  ["RIAA", RIAA_SPEC],
  ["IEC with 7950 µs high-pass", IEC_HIGHPASS_SPEC],
  [
    "turnover 800 Hz, 16 dB, no shelf + high-pass",
    {
      turnover: { unit: "hz", value: 800 },
      rolloff: { unit: "db10k", value: 16 },
      highpass: { unit: "us", value: 7950 },
    },
  ],
];

console.log(`curve maths benchmark (node ${process.version})`);
for (const [name, spec] of specs) {
  for (const rate of [44_100, 96_000, 192_000]) {
    timeIt(`IIR design, ${name} @ ${rate}`, "designs", () => {
      designIir(spec, rate);
      return 1;
    });
  }
}

const model = analogModel(RIAA_SPEC);
const grid = logGrid(10, 30_000, 1000);
timeIt("analog response, 1000 frequencies per call", "evaluations", () => {
  analogResponse(model, grid);
  return grid.length;
});
const sos = designIir(RIAA_SPEC, 48_000).sos;
timeIt("IIR (SOS) response, 1000 frequencies per call", "evaluations", () => {
  sosResponse(sos, grid, 48_000);
  return grid.length;
});

for (const [name, spec] of specs.slice(0, 3)) {
  for (const rate of [44_100, 96_000, 384_000]) {
    let taps = 0;
    timeIt(
      `render filter design, ${name} @ ${rate}`,
      "designs",
      () => {
        taps = designRenderFilter(spec, rate).taps.length;
        return 1;
      },
      1000,
    );
    void taps;
  }
}

const rf = designRenderFilter(IEC_HIGHPASS_SPEC, 96_000);
const conv = new StreamingConvolver(rf.taps);
const block = new Float64Array(conv.blockSize).map(() => Math.random() - 0.5);
timeIt(`streaming convolution, ${rf.taps.length} taps, blocks of ${conv.blockSize}`, "samples", () => {
  conv.process(block);
  return block.length;
});
