/**
 * pinchoff characterize: sweep a process description's NMOS and PMOS over VGS,
 * VDS and VSB for a set of lengths with ngspice, cache the tables, and write them
 * as JSON and CSV. A progress bar goes to stderr when it is a terminal.
 */
import { mkdirSync } from "node:fs";
import { join, resolve } from "node:path";
import { InputError } from "../errors.js";
import { writeFileAtomic } from "../io/atomic-write.js";
import { cacheFolder, characterize, defaultGrid, evenGrid, tableCsv, tableJson, type SweepGrid } from "../process/characterize.js";
import { readProcess, type Polarity } from "../process/description.js";
import { readSpiceNumber } from "../units/spice-number.js";
import { defineCommand, type CommandSpec } from "./args.js";

export const command = {
  name: "characterize",
  positionals: [{ name: "process.json" }],
  options: {
    device: { kind: "value", placeholder: "nmos|pmos|both", help: "which device (default both)" },
    corner: { kind: "value", placeholder: "NAME", help: "a corner of the process description (default its library section)" },
    lengths: { kind: "value", placeholder: "L,L,...", help: "channel lengths, SPICE numbers in metres (e.g. 0.5u,1u,2u);\ndefault 0.28 µm to 10 µm in steps of at most 25 %" },
    w: { kind: "value", placeholder: "W", help: "reference width, SPICE number in metres (default 10u)" },
    "vgs-points": { kind: "value", placeholder: "N", help: "|VGS| points from 0 to the nominal supply (default 67)" },
    "vds-points": { kind: "value", placeholder: "N", help: "|VDS| points from 0 to the nominal supply (default 34)" },
    "vsb-points": { kind: "value", placeholder: "N", help: "|VSB| points from 0 to --vsb-max (default 5)" },
    "vsb-max": { kind: "value", placeholder: "V", help: "largest |VSB| (default 1.2 V or half the supply)" },
    out: { kind: "value", placeholder: "DIR", help: "write <process>-<device>-<section>.json and .csv here" },
    cache: { kind: "value", placeholder: "DIR", help: "cache folder (default $PINCHOFF_CACHE, $XDG_CACHE_HOME/pinchoff\nor ~/.cache/pinchoff)" },
    "no-cache": { kind: "flag", help: "neither read nor write the cache" },
    jobs: { kind: "value", placeholder: "N", help: "decks per device, each with a share of the lengths\n(default the number of cores)" },
  },
  description: `Characterises the process's transistors with its model library in ngspice:
each device is swept over |VGS|, |VDS| and |VSB| at every length at the
reference width: one deck per core, each one ngspice run over a share of the
lengths (an instance per length and VSB on shared sources). The table holds ID/W,
gm/ID, gds/ID, gm/gds, threshold, VDsat, Cgg, Cgs and Cgd per width and fT, and
is cached by a fingerprint of the library files, section, device, width,
temperature and grid, so a second run with the same inputs reads the cache.
The built-in demo process is processes/gf180-3v3.json (open 180 nm kit).`,
} as const satisfies CommandSpec;

const count = (v: string | undefined, name: string, dflt: number): number => {
  if (v === undefined) return dflt;
  const n = Number(v);
  if (!Number.isInteger(n) || n < 2 || n > 1000) throw new InputError(v, "a whole number from 2 to 1000", `--${name}`);
  return n;
};
const metres = (v: string, name: string): number => {
  const x = readSpiceNumber(v);
  if (x === undefined || !Number.isFinite(x) || x <= 0) throw new InputError(v, "a length in metres > 0 (SPICE number, e.g. 0.5u)", `--${name}`);
  return x;
};

export const main = defineCommand(command, async ({ values, positionals }) => {
  const p = readProcess(positionals[0]!);
  const which = values.device ?? "both";
  if (!["nmos", "pmos", "both"].includes(which)) throw new InputError(which, "nmos, pmos or both", "--device");
  const devices: Polarity[] = which === "both" ? ["nmos", "pmos"] : [which as Polarity];
  const jobs = values.jobs === undefined ? undefined : count(values.jobs, "jobs", 2);
  const tty = process.stderr.isTTY === true;
  for (const polarity of devices) {
    const base = defaultGrid(p, polarity);
    const v = p.supply.nominal;
    const vsbMax = values["vsb-max"] === undefined ? base.vsb[base.vsb.length - 1]! : Number(values["vsb-max"]);
    if (!Number.isFinite(vsbMax) || vsbMax < 0 || vsbMax > p.supply.max) throw new InputError(values["vsb-max"], `a voltage from 0 to ${p.supply.max} V`, "--vsb-max");
    const grid: SweepGrid = {
      l: values.lengths === undefined ? base.l : values.lengths.split(",").map((x) => metres(x.trim(), "lengths")).sort((a, b) => a - b),
      vgs: evenGrid(0, v, count(values["vgs-points"], "vgs-points", 67)),
      vds: evenGrid(0, v, count(values["vds-points"], "vds-points", 34)),
      vsb: evenGrid(0, vsbMax, vsbMax === 0 ? 1 : count(values["vsb-points"], "vsb-points", 5)),
    };
    const t0 = performance.now();
    const progress = (done: number, total: number) => {
      if (!tty) return;
      const n = 30;
      const k = Math.round((n * done) / total);
      process.stderr.write(`\r${polarity} [${"#".repeat(k)}${".".repeat(n - k)}] ${done}/${total} lengths`);
      if (done === total) process.stderr.write("\n");
    };
    const t = await characterize(p, {
      polarity,
      grid,
      ...(values.w !== undefined ? { w: metres(values.w, "w") } : {}),
      ...(values.corner !== undefined ? { corner: values.corner } : {}),
      cache: values["no-cache"] ? false : values.cache !== undefined ? resolve(values.cache) : cacheFolder(),
      ...(jobs !== undefined ? { jobs } : {}),
      progress,
    });
    const s = (performance.now() - t0) / 1000;
    const points = t.data.idw.length;
    console.log(`${p.name} ${t.model} (${polarity}, section ${t.section}): ${grid.l.length} lengths × ${grid.vgs.length} VGS × ${grid.vds.length} VDS × ${grid.vsb.length} VSB = ${points} points in ${s.toFixed(1)} s; fingerprint ${t.fingerprint.slice(0, 12)}`);
    if (values.out !== undefined) {
      mkdirSync(resolve(values.out), { recursive: true });
      const stem = join(resolve(values.out), `${p.name}-${polarity}-${t.section}`);
      writeFileAtomic(`${stem}.json`, tableJson(t));
      writeFileAtomic(`${stem}.csv`, tableCsv(t));
      console.log(`wrote ${stem}.json and ${stem}.csv`);
    }
  }
  return 0;
});
