/**
 * Fitted models in the two-transistor stages and synthesis: EKV current-mirror
 * analyses (both branches by the model, verified) and diode-load analyses per
 * second, and EKV four-resistor designs (model inversion, E24 set search) per
 * second. No record. The EKV card is invented.
 */
import { analyzeStage } from "../../../lib/bias/analyze.js";
import { synthesizeFourResistor, type FourResistorSpec } from "../../../lib/bias/synthesis.js";
import type { Stage } from "../../../lib/bias/topology.js";
import type { DeviceCard } from "../../../lib/device/card.js";
import type { Amperes, Meters, Volts } from "../../../lib/quantity.js";
import { defineCases } from "../case.js";

const card = { name: "bench-n-ekv (invented)", polarity: "nmos", model: "ekv", kp: 150e-6, vt0: 0.6, lambda: 0.04, gamma: 0.45, phi: 0.7, theta: 0.2, thetaB: 0.05, ecrit: 4e6, sigma: 0.01 } as unknown as DeviceCard;
const pcard = { ...card, name: "bench-p-ekv (invented)", polarity: "pmos", vt0: -0.6 } as unknown as DeviceCard;
const mirror = (rref: number) => ({ topology: "current-mirror", device: { card, w: 20e-6, l: 1e-6 }, devices: { reference: { card, w: 10e-6, l: 1e-6 } }, components: { rref, rload: 8e3 }, supplies: { vdd: 5 } }) as unknown as Stage;
const diode = (vg: number) => ({ topology: "diode-load", device: { card, w: 20e-6, l: 1e-6 }, devices: { load: { card: pcard, w: 5e-6, l: 1e-6 } }, components: { vg }, supplies: { vdd: 5 } }) as unknown as Stage;
const specAt = (id: number): FourResistorSpec => ({ topology: "four-resistor", device: { card }, supplies: { vdd: 9 as Volts }, body: "rail", specification: { id: id as Amperes, sizing: { vov: 0.35 as Volts, l: 1e-6 as Meters }, drain: { gain: 6 } } });
let sink = 0;

function rate(n: number, one: (i: number) => number): number {
  const t0 = performance.now();
  for (let i = 0; i < n; i++) sink += one(i);
  return (n / (performance.now() - t0)) * 1000;
}

export const cases = defineCases([
  {
    id: "models.ekvMirror",
    title: "EKV current-mirror analyses per second (reference and output branches by the model, KCL verified, no record)",
    setup() {
      rate(50, (i) => analyzeStage(mirror(10e3 + i)).currents.drainMagnitude!);
    },
    measure: () => ({ analyses: rate(500, (i) => analyzeStage(mirror(10e3 + 10 * i)).currents.drainMagnitude!) }),
    figures: { analyses: { unit: "analyses/s", better: "higher", target: 1000, note: "two regula falsi solves, two operating points with small-signal parameters" } },
  },
  {
    id: "models.ekvDiodeLoad",
    title: "EKV diode-load analyses per second (output by the models, swing's triode edge by nested bisection, no record)",
    setup() {
      rate(10, (i) => analyzeStage(diode(1.2 + 0.001 * i)).nodes.drain);
    },
    measure: () => ({ analyses: rate(50, (i) => analyzeStage(diode(1.2 + 0.001 * i)).nodes.drain) }),
    figures: { analyses: { unit: "analyses/s", better: "higher", target: 50, note: "the lower swing end costs most: a gate solve per trial output" } },
  },
  {
    id: "models.ekvFourResistorE24",
    title: "EKV four-resistor designs per second (model inversion, E24 set search with 16 re-solved candidates, no record)",
    setup() {
      rate(5, (i) => synthesizeFourResistor(specAt((1 + (i % 16) / 16) * 1e-3)).analysis.currents.drainMagnitude!);
    },
    measure: () => ({ designs: rate(40, (i) => synthesizeFourResistor(specAt((1 + (i % 16) / 16) * 1e-3)).analysis.currents.drainMagnitude!) }),
    figures: { designs: { unit: "designs/s", better: "higher", target: 50, note: "the design VDS iterated; each pass inverts the model" } },
    teardown() {
      if (!Number.isFinite(sink)) throw new Error("bench produced a non-finite result");
    },
  },
]);
