/**
 * The numeric core: drain-current evaluations per second on plain numbers,
 * and what importing the built core adds to a bare node start.
 */
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import type { Device } from "../../../lib/index.js";
import { builtCore as core, defineCases, repoRoot, type Core } from "../case.js";
import { esmScript, timeNode } from "../spawn.js";

const root = repoRoot;
const coreUrl = pathToFileURL(join(root, "dist/index.js")).href;


// Inputs: a fixed pseudo-random spread over cutoff, triode and saturation, with
// and without body bias, so no branch is always taken and nothing can be hoisted.
const points = 4096;
const vgs = new Float64Array(points);
const vds = new Float64Array(points);
const vsb = new Float64Array(points);
let dev: Device | undefined;
let drainCurrent: Core["drainCurrent"] | undefined;
const evaluationsPerRepeat = 8_000_000;
/** Results are summed into this so the work cannot be dropped. */
export let sink = 0;

export const cases = defineCases([
  {
    id: "core.drainCurrent",
    title: "drainCurrent evaluations per second, plain numbers, varied inputs (dist/index.js)",
    repeats: 7,
    async setup() {
      const c = await core();
      // Invented card for the benchmark, not a real process.
      const card = { name: "bench-n", polarity: "nmos", kp: c.amperesPerVoltSquared(120e-6), vt0: c.volts(0.45), lambda: c.perVolt(0.04), gamma: c.sqrtVolts(0.45), phi: c.volts(0.8) } as const;
      dev = c.device(card, c.meters(20e-6), c.meters(0.5e-6));
      drainCurrent = c.drainCurrent;
      let s = 12345;
      const rand = () => ((s = (s * 1103515245 + 12345) >>> 0) / 2 ** 32);
      for (let i = 0; i < points; i++) {
        vgs[i] = rand() * 1.8;
        vds[i] = rand() * 2.0 - 0.2; // a few reversed points
        vsb[i] = rand() < 0.5 ? 0 : rand() * 1.2;
      }
      for (let i = 0; i < 200_000; i++) sink += drainCurrent(dev, vgs[i & (points - 1)]!, vds[i & (points - 1)]!, vsb[i & (points - 1)]!); // warm-up
    },
    measure() {
      const f = drainCurrent!;
      const d = dev!;
      const rounds = evaluationsPerRepeat / points;
      let sum = 0;
      const t0 = performance.now();
      for (let r = 0; r < rounds; r++) for (let i = 0; i < points; i++) sum += f(d, vgs[i]!, vds[i]!, vsb[i]!);
      const s = (performance.now() - t0) / 1e3;
      if (!Number.isFinite(sum)) throw new Error(`bench: drainCurrent gave a non-finite sum ${sum}`);
      sink += sum;
      return { rate: (rounds * points) / s };
    },
    figures: { rate: { unit: "evals/s", better: "higher", target: 20e6, note: "one NMOS with body effect and λ, 4096 varied bias points" } },
  },
  {
    id: "core.import",
    title: "import time of dist/index.js over a bare `node -e \"\"` start (child processes)",
    repeats: 11,
    async setup() {
      await core();
      timeNode(["-e", ""], root); // warm the file cache
      timeNode(esmScript(`import ${JSON.stringify(coreUrl)};`), root);
    },
    measure() {
      const bare = timeNode(["-e", ""], root).ms;
      const withCore = timeNode(esmScript(`import ${JSON.stringify(coreUrl)};`), root).ms;
      const inChild = timeNode(esmScript(`const t = performance.now(); await import(${JSON.stringify(coreUrl)}); console.log(JSON.stringify({ ms: performance.now() - t }));`), root).report?.ms;
      return { bare, withCore, added: withCore - bare, inChild: inChild ?? Number.NaN };
    },
    figures: {
      bare: { unit: "ms", better: "lower", note: 'node -e ""' },
      withCore: { unit: "ms", better: "lower", note: "node --input-type=module -e 'import \"…/dist/index.js\"'" },
      added: { unit: "ms", better: "lower", target: 50, note: "withCore − bare in the same repeat (includes starting the ES module loader)" },
      inChild: { unit: "ms", better: "lower", note: "the import alone, timed inside the child with performance.now() (less noisy on a loaded machine)" },
    },
    ratios: [{ name: "with core over bare start", of: "withCore", over: "bare", better: "lower" }],
  },
]);
