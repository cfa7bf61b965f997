/**
 * Frequency analysis speed: a four-resistor common source with a Level 1
 * capacitance card, its response analysed from a solved operating point with
 * capacitors designed for a 20 Hz corner (E12), no record. Invented values.
 */
import { analyzeStage } from "../../../lib/bias/analyze.js";
import { analyzeFrequency, type FrequencySpec } from "../../../lib/bias/frequency.js";
import type { Stage, StageAnalysis } from "../../../lib/bias/topology.js";
import { amperesPerVoltSquared, farads, hertz, meters, ohms, perVolt, volts } from "../../../lib/quantity.js";
import { defineCases } from "../case.js";

const stage: Stage = {
  topology: "four-resistor",
  device: {
    card: { name: "bench-n", polarity: "nmos", kp: amperesPerVoltSquared(100e-6), vt0: volts(0.7), lambda: perVolt(0.02), capacitance: { tox: meters(20e-9), cgso: 2e-10 as never, cgdo: 2e-10 as never, cj: 5e-4 as never, cjsw: 2e-10 as never, diffusionLength: meters(3e-6) }, provenance: "invented for the bench" },
    w: meters(40e-6),
    l: meters(2e-6),
  },
  components: { rg1: ohms(680e3), rg2: ohms(220e3), rd: ohms(10e3), rs: ohms(1.5e3) },
  supplies: { vdd: volts(12) },
};
const spec: FrequencySpec = { source: { resistance: ohms(10e3) }, load: { resistance: ohms(100e3), capacitance: farads(10e-12) }, targets: { lowCorner: hertz(20) } };
let dc: StageAnalysis;
let sink = 0;

function run(n: number): number {
  const t0 = performance.now();
  for (let i = 0; i < n; i++) sink += analyzeFrequency(stage, dc, spec).high.corner;
  return (n / (performance.now() - t0)) * 1000;
}

export const cases = defineCases([
  {
    id: "frequency.designedStage",
    title: "Frequency analyses per second (capacitors designed for a corner, no record)",
    setup() {
      dc = analyzeStage(stage as never);
      run(200);
    },
    measure() {
      const rate = run(2000);
      if (!(sink > 0)) throw new Error("bench: no corner computed");
      return { rate };
    },
    figures: { rate: { unit: "analyses/s", better: "higher", target: 200, note: "one thread, under 5 ms each; includes the E12 set search (up to 6³ combinations, each a bisection)" } },
  },
]);
