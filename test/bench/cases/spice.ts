/**
 * The simulator in the loop (ngspice 39 with the open 180 nm kit's BSIM4 library):
 * characterising both 3.3 V devices over 6 lengths on a 67 VGS × 34 VDS × 5 VSB
 * grid (no cache: every repeat runs ngspice), a table lookup with interpolation,
 * and one stage verification including ngspice's start and the library load.
 * The machine is shared (2 cores); the load average is printed with the figures.
 */
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import type { DeviceTable, ProcessDescription, Stage } from "../../../lib/index.js";
import { builtCore, defineCases, type Core } from "../case.js";

/** CPU seconds of finished child processes (Linux /proc: cutime + cstime, clock ticks of 10 ms): the ngspice work, whatever the load. */
function childCpuSeconds(): number {
  const f = readFileSync("/proc/self/stat", "utf8");
  const rest = f.slice(f.lastIndexOf(")") + 2).split(" ");
  return (Number(rest[13]) + Number(rest[14])) / 100;
}

let core: Core;
let proc: ProcessDescription;
let table: DeviceTable;
/** Results summed into a typed array: a module-level number would box (allocate) on every add and bill the lookup for it. */
const sink = new Float64Array(1);
const lengths = [0.28, 0.5, 1, 2, 5, 10].map((x) => x * 1e-6);

const stage = {
  topology: "four-resistor",
  name: "bench stage (invented)",
  device: { card: { name: "kit NMOS, square law from memory", polarity: "nmos", kp: 170e-6, vt0: 0.7, lambda: 0.05, gamma: 0.6, phi: 0.8 }, w: 20e-6, l: 1e-6 },
  components: { rg1: 250e3, rg2: 100e3, rd: 10e3, rs: 300 },
  supplies: { vdd: 3.3 },
  body: "rail",
} as unknown as Stage;

export const cases = defineCases([
  {
    id: "spice.characterizeBoth",
    title: "Characterise NMOS and PMOS, 6 lengths × 67 VGS × 34 VDS × 5 VSB (ngspice, no cache)",
    repeats: 3,
    async setup() {
      core = await builtCore();
      proc = core.readProcess(core.builtinProcessFile());
    },
    async measure() {
      const t0 = performance.now();
      const c0 = childCpuSeconds();
      const grid = { ...core.defaultGrid(proc, "nmos"), l: lengths };
      const [n] = await Promise.all((["nmos", "pmos"] as const).map((polarity) => core.characterize(proc, { polarity, grid: { ...grid }, cache: false })));
      table = n!;
      return { seconds: (performance.now() - t0) / 1000, cpu: childCpuSeconds() - c0 };
    },
    figures: {
      seconds: { unit: "s", better: "lower", target: 30, note: "2 devices × 6 lengths × 5 VSB in one deck per core per device (4 decks, one ngspice per core), 136 680 points; on a loaded machine compare the CPU figure" },
      cpu: { unit: "s", better: "lower", note: "ngspice CPU time (user + system) of the child processes: the work, whatever the load; on an idle 2-core machine the wall time is about half of it plus the start" },
    },
  },
  {
    id: "spice.lookup",
    title: "Table lookups with interpolation per second (Hermite in VGS, VDS/VSB/L between grid points)",
    async setup() {
      core ??= await builtCore();
      proc ??= core.readProcess(core.builtinProcessFile());
      if (!table) {
        const dir = mkdtempSync(join(tmpdir(), "pinchoff-bench-"));
        try {
          table = await core.characterize(proc, { polarity: "nmos", grid: { l: [0.5e-6, 1e-6, 2e-6], vgs: core.evenGrid(0, 3.3, 67), vds: core.evenGrid(0, 3.3, 12), vsb: [0, 0.6] }, cache: dir });
        } finally {
          rmSync(dir, { recursive: true, force: true });
        }
      }
    },
    measure() {
      const lk = core.deviceLookup(table);
      const out = core.emptyPoint();
      const ls = table.grid.l;
      const lmin = ls[0]!, lmax = ls[ls.length - 1]!;
      const vmax = table.grid.vgs[table.grid.vgs.length - 1]!;
      const dmax = table.grid.vds[table.grid.vds.length - 1]!;
      const bmax = table.grid.vsb[table.grid.vsb.length - 1]!;
      const n = 1_000_000;
      const c0 = process.cpuUsage();
      const t0 = performance.now();
      for (let i = 0; i < n; i++) {
        const f = (i * 0.6180339887) % 1;
        core.lookupInto(lk, lmin + (lmax - lmin) * f, 0.3 + (vmax - 0.3) * ((i * 0.7548776662) % 1), dmax * ((i * 0.5698402910) % 1), bmax * ((i * 0.3819660113) % 1), out);
        sink[0]! += out.idw;
      }
      if (!(sink[0]! > 0)) throw new Error("bench: no current looked up");
      const wall = (performance.now() - t0) / 1000;
      const c = process.cpuUsage(c0);
      return { rate: n / wall, cpuRate: n / ((c.user + c.system) / 1e6) };
    },
    figures: {
      rate: { unit: "lookups/s", better: "higher", target: 1e6, note: "allocation-free, all axes between grid points" },
      cpuRate: { unit: "lookups/CPU-s", better: "higher", note: "per second of this process's CPU time: what one idle core gives; on a loaded machine the wall rate is lower by the share of the core it gets" },
    },
  },
  {
    id: "spice.verifyStage",
    title: "One stage verification (.op and .tf with the kit's library, ngspice start included)",
    async setup() {
      core ??= await builtCore();
      proc ??= core.readProcess(core.builtinProcessFile());
    },
    async measure() {
      const t0 = performance.now();
      const v = await core.verifyStage(stage, proc);
      if (!v.devices[0]) throw new Error("bench: nothing verified");
      return { seconds: (performance.now() - t0) / 1000 };
    },
    figures: { seconds: { unit: "s", better: "lower", target: 1, note: "library load ≈ 0.3 s of it" } },
  },
]);
