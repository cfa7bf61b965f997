/**
 * Bias solver speed: four-resistor stages with λ and the body effect (body at
 * the rail), solved on plain numbers through the no-record path, one thread.
 * The values are invented, spread over realistic ranges.
 */
import { newSolution, solveNetwork, type BiasNetwork } from "../../../lib/bias/solve.js";
import { defineCases } from "../case.js";

const variants = 4096;
const vg = new Float64Array(variants);
const rd = new Float64Array(variants);
const rs = new Float64Array(variants);
const net: BiasNetwork = { k: 2e-3, vt0: 0.5, gamma: 0.45, phi: 0.7, lambda: 0.04, clm: "continuous", vdr: 5, vsr: 0, gateToDrain: false, vg: 0, rd: 0, rs: 0, iss: 0, bodyToRail: true };
const out = newSolution();
let seed = 12345;
const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
let sink = 0;

function run(points: number): number {
  const t0 = performance.now();
  for (let i = 0; i < points; i++) {
    const j = i & (variants - 1);
    net.vg = vg[j]!;
    net.rd = rd[j]!;
    net.rs = rs[j]!;
    solveNetwork(net, out, "bench");
    sink += out.id;
  }
  return (points / (performance.now() - t0)) * 1000;
}

export const cases = defineCases([
  {
    id: "bias.fourResistorOps",
    title: "Four-resistor operating points per second (λ and body effect, no record)",
    setup() {
      for (let j = 0; j < variants; j++) {
        vg[j] = 0.8 + 2.5 * rand(); // gate bias from the divider, V
        rd[j] = Math.exp(Math.log(500) + rand() * Math.log(200)); // 500 Ω … 100 kΩ
        rs[j] = Math.exp(Math.log(100) + rand() * Math.log(100)); // 100 Ω … 10 kΩ
      }
      run(200_000);
    },
    measure() {
      const rate = run(1_000_000);
      if (!(sink > 0)) throw new Error("bench: no current computed");
      return { rate };
    },
    figures: { rate: { unit: "points/s", better: "higher", target: 1e6, note: "single thread, bracketed Newton, mixed saturation and triode" } },
  },
]);
