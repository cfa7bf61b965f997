/**
 * Synthesis and tolerance speed: a four-resistor design with E24 values chosen
 * as a set (16 candidate stages re-solved per design), and a worst-case corner
 * run (4 resistors, Vt and k', 3 temperatures: 192 stages). No record.
 * The specification and card are invented.
 */
import { synthesizeFourResistor, type FourResistorSpec } from "../../../lib/bias/synthesis.js";
import { toleranceAnalysis } from "../../../lib/bias/tolerance.js";
import type { DeviceCard } from "../../../lib/device/card.js";
import type { Amperes, Kelvin, Meters, Volts } from "../../../lib/quantity.js";
import { defineCases } from "../case.js";

const card = { name: "bench-n (invented)", polarity: "nmos", kp: 120e-6, vt0: 0.55, lambda: 0.03, gamma: 0.45, phi: 0.7 } as DeviceCard;
const specAt = (id: Amperes): FourResistorSpec => ({
  topology: "four-resistor",
  device: { card },
  supplies: { vdd: 9 as Volts },
  body: "rail",
  specification: { id, sizing: { vov: 0.35 as Volts, l: 1e-6 as Meters }, drain: { gain: 6 } },
});
const spec = specAt(2e-3 as Amperes);
let sink = 0;

function designs(n: number): number {
  const t0 = performance.now();
  for (let i = 0; i < n; i++) sink += synthesizeFourResistor(specAt(((1 + (i % 16) / 16) * 1e-3) as Amperes)).analysis.currents.drainMagnitude!;
  return (n / (performance.now() - t0)) * 1000;
}

function corners(n: number): number {
  const stage = synthesizeFourResistor(spec).stage;
  const t0 = performance.now();
  let cases = 0;
  for (let i = 0; i < n; i++) {
    const r = toleranceAnalysis(stage, { series: "E24", process: { vt0: 0.05 as Volts, kp: 0.1 }, temperatures: [233.15 as Kelvin, 300.15 as Kelvin, 358.15 as Kelvin] });
    cases += r.cases.length;
    sink += r.id.max;
  }
  return (cases / (performance.now() - t0)) * 1000;
}

export const cases = defineCases([
  {
    id: "synthesis.fourResistorE24",
    title: "Four-resistor designs per second (E24 set search, 16 re-solved candidates each, no record)",
    setup() {
      designs(50);
    },
    measure: () => ({ designs: designs(200) }),
    figures: { designs: { unit: "designs/s", better: "higher", target: 500, note: "spec → ideal → 16 re-solves → chosen stage analysed" } },
  },
  {
    id: "synthesis.toleranceCorners",
    title: "Worst-case tolerance cases per second (64 corners × 3 temperatures per run, no record)",
    setup() {
      corners(2);
    },
    measure: () => ({ cases: corners(10) }),
    figures: { cases: { unit: "cases/s", better: "higher", target: 5000, note: "one full stage analysis per case" } },
    teardown() {
      if (!Number.isFinite(sink)) throw new Error("bench: non-finite result");
    },
  },
]);
