/**
 * The device model off the drain-current hot path: small-signal parameters
 * (which allocate one result object each) and inverse design, per second,
 * without a derivation record.
 */
import type { Device } from "../../../lib/index.js";
import { builtCore as core, defineCases, type Core } from "../case.js";


const points = 4096;
const vgs = new Float64Array(points);
const vds = new Float64Array(points);
const vsb = new Float64Array(points);
const ids = new Float64Array(points);
let c: Core | undefined;
let dev: Device | undefined;
let ekvDev: Device | undefined;
let ekvVector: Float64Array | undefined;
/** Results are summed into this so the work cannot be dropped. */
export let sink = 0;

async function prepare(): Promise<void> {
  c = await core();
  // Invented card for the benchmark, not a real process.
  const card = { name: "bench-n", polarity: "nmos", kp: c.amperesPerVoltSquared(120e-6), vt0: c.volts(0.45), lambda: c.perVolt(0.04), gamma: c.sqrtVolts(0.45), phi: c.volts(0.8) } as const;
  dev = c.device(card, c.meters(20e-6), c.meters(0.5e-6));
  // The same invented card as an EKV card with the short-channel terms switched on.
  const ekvCard = { ...card, name: "bench-n-ekv", model: "ekv", theta: c.perVolt(0.2), ecrit: c.voltsPerMeter(4e6), sigma: c.ratio(0.02) } as const;
  ekvDev = c.device(ekvCard, c.meters(20e-6), c.meters(0.5e-6));
  ekvVector = c.parameterVector(ekvDev);
  let s = 98765;
  const rand = () => ((s = (s * 1103515245 + 12345) >>> 0) / 2 ** 32);
  for (let i = 0; i < points; i++) {
    vgs[i] = rand() * 1.8;
    vds[i] = rand() * 2.0 - 0.2;
    vsb[i] = rand() < 0.5 ? 0 : rand() * 1.2;
    ids[i] = 1e-6 + rand() * 1e-3;
  }
}

function rate(n: number, body: (i: number) => number): number {
  let sum = 0;
  const t0 = performance.now();
  for (let r = 0; r < n; r++) sum += body(r & (points - 1));
  const s = (performance.now() - t0) / 1e3;
  if (!Number.isFinite(sum)) throw new Error(`bench: non-finite sum ${sum}`);
  sink += sum;
  return n / s;
}

export const cases = defineCases([
  {
    id: "device.ekvCurrent",
    title: "EKV all-region ID evaluations per second from a parameter vector, varied bias (dist/index.js)",
    repeats: 7,
    async setup() {
      if (!c) await prepare();
      const m = c!.ekv;
      for (let i = 0; i < 200_000; i++) sink += m.current(ekvVector!, vgs[i & (points - 1)]!, vds[i & (points - 1)]!, vsb[i & (points - 1)]!);
    },
    measure() {
      const f = c!.ekv.current;
      const p = ekvVector!;
      const c0 = process.cpuUsage();
      const r = rate(4_000_000, (i) => f(p, vgs[i]!, vds[i]!, vsb[i]!));
      const cpu = process.cpuUsage(c0);
      return { rate: r, cpuRate: 4_000_000 / ((cpu.user + cpu.system) / 1e6) };
    },
    figures: {
      rate: { unit: "evals/s", better: "higher", note: "one point per call (informational; the 2e7/s target is the block path's, device.ekvCurrents): weak to strong inversion, both VDS signs, body effect, velocity saturation" },
      cpuRate: { unit: "evals/s", better: "higher", note: "the same per second of process CPU time, for a loaded machine" },
    },
  },
  {
    id: "device.ekvCurrents",
    title: "EKV all-region ID evaluations per second through the block evaluator (ekv.currents), a 4096-point varied-bias sweep (dist/index.js)",
    repeats: 7,
    async setup() {
      if (!c) await prepare();
      for (let r = 0; r < 50; r++) c!.ekv.currents!(ekvVector!, vgs, vds, vsb, ids, points);
    },
    measure() {
      const f = c!.ekv.currents!;
      const p = ekvVector!;
      const out = new Float64Array(points);
      const sweeps = 1000;
      const c0 = process.cpuUsage();
      const t0 = performance.now();
      for (let r = 0; r < sweeps; r++) f(p, vgs, vds, vsb, out, points);
      const s = (performance.now() - t0) / 1e3;
      const cpu = process.cpuUsage(c0);
      let sum = 0;
      for (let i = 0; i < points; i++) sum += out[i]!;
      if (!Number.isFinite(sum)) throw new Error(`bench: non-finite sum ${sum}`);
      sink += sum;
      return { rate: (sweeps * points) / s, cpuRate: (sweeps * points) / ((cpu.user + cpu.system) / 1e6) };
    },
    figures: {
      rate: { unit: "evals/s", better: "higher", target: 2e7, note: "the same invented card and biases as device.ekvCurrent, all points of the sweep in one call" },
      cpuRate: { unit: "evals/s", better: "higher", note: "the same per second of process CPU time, for a loaded machine" },
    },
  },
  {
    id: "device.ekvDrainCurrent",
    title: "drainCurrent evaluations per second on an EKV card, varied bias (dist/index.js)",
    repeats: 7,
    async setup() {
      if (!c) await prepare();
    },
    measure() {
      const f = c!.drainCurrent;
      const d = ekvDev!;
      return { rate: rate(4_000_000, (i) => f(d, vgs[i]! as never, vds[i]! as never, vsb[i]! as never)) };
    },
    figures: { rate: { unit: "evals/s", better: "higher", note: "the card path, one point per call (informational): SPICE signs, source/drain swap, EKV" } },
  },
  {
    id: "device.smallSignal",
    title: "smallSignal evaluations per second, no record, varied bias (dist/index.js)",
    repeats: 7,
    async setup() {
      await prepare();
      for (let i = 0; i < 50_000; i++) sink += c!.smallSignal(dev!, { vgs: vgs[i & (points - 1)]! as never, vds: vds[i & (points - 1)]! as never, vsb: vsb[i & (points - 1)]! as never }).gm;
    },
    measure() {
      const ss = c!.smallSignal;
      const d = dev!;
      return { rate: rate(1_000_000, (i) => ss(d, { vgs: vgs[i]! as never, vds: vds[i]! as never, vsb: vsb[i]! as never }).gm) };
    },
    figures: { rate: { unit: "evals/s", better: "higher", target: 1e6, note: "one NMOS with body effect and λ, all regions" } },
  },
  {
    id: "device.gateVoltageFor",
    title: "gateVoltageFor solutions per second, no record, body effect (dist/index.js)",
    repeats: 7,
    async setup() {
      if (!c) await prepare();
    },
    measure() {
      const g = c!.gateVoltageFor;
      const d = dev!;
      return { rate: rate(1_000_000, (i) => g(d, ids[i]! as never, { vsb: vsb[i]! as never }).vgs) };
    },
    figures: { rate: { unit: "solutions/s", better: "higher", target: 5e5, note: "VGS for a target ID with body effect, inputs validated each call" } },
  },
]);
