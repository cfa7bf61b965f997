/**
 * "pinchoff/units": import time of dist/units/index.js, the first parse of a
 * text with a unit (which loads mathjs), and the parses after it. Each repeat
 * is a fresh child process, so the first parse really is the first.
 */
import { existsSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { defineCases } from "../case.js";
import { esmScript, timeNode } from "../spawn.js";

const root = resolve(dirname(fileURLToPath(import.meta.url)), "../../..");
const unitsUrl = pathToFileURL(join(root, "dist/units/index.js")).href;

// Runs in the child: times each stage with performance.now() and prints one JSON line.
const child = `
const mb = () => process.memoryUsage().rss / 2 ** 20;
const t0 = performance.now();
const u = await import(${JSON.stringify(unitsUrl)});
const t1 = performance.now();
if (u.unitEngineLoaded()) throw new Error("mathjs loaded at import");
const rss0 = mb();
u.parseQuantity("4k7", "resistance");
const t2 = performance.now();
if (u.unitEngineLoaded()) throw new Error("mathjs loaded for an IEC code");
const first = u.parseQuantity("4.7 kΩ", "resistance");
const t3 = performance.now();
if (!u.unitEngineLoaded() || first !== 4700) throw new Error("first parse wrong");
const rss1 = mb();
// New unit texts: each is read by mathjs once, then cached.
const fresh = ["20 uA", "200 uA/V^2", "0.02 /V", "0.4 sqrt(V)", "27 degC", "1 um", "2.2 nF", "5 mS", "-2 mV/K", "400 cm^2/(V s)"];
const t4 = performance.now();
for (const t of fresh) u.parseAny(t);
const t5 = performance.now();
// Repeated units with varied numbers: the usual case in a notebook or a design file.
const units = ["kΩ", "uA", "uA/V^2", "/V", "V", "mV", "um", "nF"];
const dims = ["resistance", "current", "transconductanceParameter", "inverseVoltage", "voltage", "voltage", "length", "capacitance"];
const n = 20000;
let sum = 0;
const t6 = performance.now();
for (let i = 0; i < n; i++) { const k = i & 7; sum += u.parseQuantity((1 + (i % 997) / 100) + " " + units[k], dims[k]); }
const t7 = performance.now();
const spice = ["4.7k", "1meg", "10u", "2.2n", "4k7", "R47", "0.5", "1e-3"];
let t8 = performance.now();
for (let i = 0; i < n; i++) sum += u.parseQuantity(spice[i & 7], "resistance");
const t9 = performance.now();
if (!Number.isFinite(sum)) throw new Error("non-finite sum");
console.log(JSON.stringify({ importMs: t1 - t0, codeFirstMs: t2 - t1, firstParseMs: t3 - t2, engineMB: rss1 - rss0, newUnitUs: ((t5 - t4) * 1e3) / fresh.length, cachedUnitUs: ((t7 - t6) * 1e3) / n, bareNumberUs: ((t9 - t8) * 1e3) / n }));
`;

export const cases = defineCases([
  {
    id: "units.parse",
    title: "pinchoff/units: import, first parse (loads mathjs), later parses (dist/units/index.js, fresh child per repeat)",
    repeats: 7,
    setup() {
      if (!existsSync(join(root, "dist/units/index.js"))) throw new Error("bench: dist/units/index.js is missing: run `npm run bench` (it builds first)");
      timeNode(esmScript(child), root); // warm the file cache
    },
    measure() {
      const bare = timeNode(["-e", ""], root).ms;
      const importOnly = timeNode(esmScript(`import ${JSON.stringify(unitsUrl)};`), root).ms;
      const r = timeNode(esmScript(child), root).report;
      if (!r) throw new Error("bench: the units child printed no report");
      return { importAddedMs: importOnly - bare, ...r } as Record<string, number>;
    },
    figures: {
      importAddedMs: { unit: "ms", better: "lower", target: 50, note: "import of dist/units/index.js over a bare node start (child processes)" },
      importMs: { unit: "ms", better: "lower", note: "the same import timed inside the child" },
      codeFirstMs: { unit: "ms", better: "lower", note: 'first parse of an IEC code "4k7" (no mathjs)' },
      firstParseMs: { unit: "ms", better: "lower", note: 'first parse of "4.7 kΩ": loads mathjs' },
      engineMB: { unit: "MB", better: "lower", note: "resident memory added by that first parse" },
      newUnitUs: { unit: "µs", better: "lower", note: "parse of a text whose unit mathjs has not read before" },
      cachedUnitUs: { unit: "µs", better: "lower", note: "parse of a text whose unit was read before (numbers vary)" },
      bareNumberUs: { unit: "µs", better: "lower", note: "parse of a SPICE number or IEC code" },
    },
    ratios: [{ name: "new unit over cached unit", of: "newUnitUs", over: "cachedUnitUs", note: "what the unit cache saves per parse" }],
  },
]);
