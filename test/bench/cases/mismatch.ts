/**
 * Mismatch Monte Carlo core speed: device-samples per second (devices in the
 * circuit × samples / time) for a five-transistor amplifier with per-device
 * Pelgrom mismatch on top of global NMOS and PMOS variation, streaming
 * statistics, no kept samples. Each device is evaluated through its model's
 * current (the square-law card here; the EKV case beside it for comparison,
 * without a target). Cards and circuit are invented.
 */
import { analyzeStage } from "../../../lib/bias/analyze.js";
import { mismatchMonteCarlo } from "../../../lib/bias/mismatch.js";
import type { Stage, StageAnalysis } from "../../../lib/bias/topology.js";
import type { DeviceCard } from "../../../lib/device/card.js";
import { defineCases } from "../case.js";

const n = { name: "bench-n (invented)", polarity: "nmos", kp: 200e-6, vt0: 0.5, lambda: 0.05, gamma: 0.4, phi: 0.7, avt: 5e-9, abeta: 1e-8 } as DeviceCard;
const p = { name: "bench-p (invented)", polarity: "pmos", kp: 80e-6, vt0: -0.55, lambda: 0.08, avt: 6e-9, abeta: 1.5e-8 } as DeviceCard;
const stage = {
  topology: "diff-pair-mirror-load",
  device: { card: n, w: 4e-6, l: 1e-6 },
  devices: { load: { card: p, w: 2e-6, l: 2e-6 }, tail: { card: n, w: 10e-6, l: 1e-6 } },
  components: { vcm: 1.6, vtail: 0.9 },
  supplies: { vdd: 3.3 },
} as unknown as Stage;
const ekvStage = {
  ...stage,
  device: { ...stage.device, card: { ...n, model: "ekv", theta: 0.2 } },
  devices: { load: { ...stage.devices!.load!, card: { ...p, model: "ekv", theta: 0.3 } }, tail: { ...stage.devices!.tail!, card: { ...n, model: "ekv", theta: 0.2 } } },
} as unknown as Stage;
let a: StageAnalysis | undefined;
let ae: StageAnalysis | undefined;
const samples = 200_000;
const opts = { samples, seed: 9, nmos: { sigmaVt: 0.015, sigmaK: 0.04 }, pmos: { sigmaVt: 0.015, sigmaK: 0.04 }, limits: { maxOffset: 0.01, commonModeMin: 1.3, commonModeMax: 2.0 } };
/** Results are summed into this so the work cannot be dropped. */
export let sink = 0;

/** One timed run of `n` samples: device-samples per second (5 devices). */
function rate(st: Stage, an: StageAnalysis, n: number): { deviceSamples: number } {
  const t0 = performance.now();
  const r = mismatchMonteCarlo(st as never, an, { ...opts, samples: n });
  const s = (performance.now() - t0) / 1e3;
  sink += r.figures[0]!.sigma;
  return { deviceSamples: (5 * n) / s };
}

export const cases = defineCases([
  {
    id: "mismatch.monteCarlo",
    title: "Mismatch Monte Carlo: five-transistor amplifier, 5 devices, global + Pelgrom per device",
    repeats: 5,
    setup() {
      a = analyzeStage(stage);
      mismatchMonteCarlo(stage as never, a, { ...opts, samples: 20_000 });
    },
    measure: () => rate(stage, a!, samples),
    figures: { deviceSamples: { unit: "device-samples/s", better: "higher", target: 1e6, note: "whole run including statistics and sensitivity sums" } },
  },
  {
    id: "mismatch.monteCarloEkv",
    title: "Mismatch Monte Carlo: the same amplifier with EKV cards (for comparison)",
    repeats: 3,
    setup() {
      ae = analyzeStage(ekvStage);
      mismatchMonteCarlo(ekvStage as never, ae, { ...opts, samples: 5_000 });
    },
    measure: () => rate(ekvStage, ae!, 50_000),
    figures: { deviceSamples: { unit: "device-samples/s", better: "higher", note: "EKV current per evaluation (exp/log); no target" } },
  },
]);
