/**
 * Fitting measured data (`pinchoff/fit`, built): one geometry of the open 180 nm
 * measurements (data/pdk180, GF180MCU 3.3 V NMOS W = 10 µm, L = 1 µm, 25 °C,
 * 731 points) by the square law and by EKV, and the whole 3.3 V set (both
 * devices, every geometry and temperature) by the square law and by EKV. Reading the CSV
 * is outside the fit timings and timed on its own.
 */
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { defineCases, repoRoot } from "../case.js";

type Fit = typeof import("../../../lib/fit/index.js");
let f: Fit | undefined;
const load = async () => (f ??= (await import(pathToFileURL(join(repoRoot, "dist/fit/index.js")).href)) as Fit);
const files = { nmos: join(repoRoot, "data/pdk180/nfet_03v3_meas_id.csv"), pmos: join(repoRoot, "data/pdk180/pfet_03v3_meas_id.csv") };
let sets: Record<"nmos" | "pmos", ReturnType<Fit["readMeasurements"]>> | undefined;
let one: ReturnType<Fit["select"]> | undefined;
let all: ReturnType<Fit["select"]>[] = [];

async function prepare() {
  const m = await load();
  sets ??= { nmos: m.readMeasurements(files.nmos), pmos: m.readMeasurements(files.pmos) };
  one = m.select(sets.nmos, { w: 10e-6, l: 1e-6, temp: 298.15 });
  all = (["nmos", "pmos"] as const).flatMap((d) => m.geometries(sets![d]).map((g) => m.select(sets![d], { w: g.w, l: g.l, temp: g.temp, corner: g.corner, currentSign: d === "pmos" ? "magnitude" : "spice" })));
  m.fitSweep(m.squareLawFit, one);
}

/** Every sweep of the set fitted by one model: wall and process CPU time (s), fits, and fits that threw a typed error. */
function fitAll(model: ReturnType<Fit["fitModelOf"]>) {
  const t = performance.now();
  const c0 = process.cpuUsage();
  let failed = 0;
  for (const s of all) {
    try {
      f!.fitSweep(model, s);
    } catch {
      failed++;
    }
  }
  const c = process.cpuUsage(c0);
  return { s: (performance.now() - t) / 1000, cpu: (c.user + c.system) / 1e6, fits: all.length, failed };
}

/** The figures of a whole-set case (`fitAll`): target ≤ 10 s wall (issue 8). */
const setFigures = (time: string, failed: string) =>
  ({
    s: { unit: "s", better: "lower", target: 10, note: time },
    cpu: { unit: "s", better: "lower", note: "process CPU time of the same run" },
    fits: { unit: "fits", better: "higher" },
    failed: { unit: "fits", better: "lower", note: failed },
  }) as const;

export const cases = defineCases([
  {
    id: "fit.read",
    title: "Reading one measurement file (54 825 rows, csv-parse)",
    repeats: 3,
    async setup() {
      await load();
    },
    async measure() {
      const m = await load();
      const t = performance.now();
      m.readMeasurements(files.nmos);
      return { ms: performance.now() - t };
    },
    figures: { ms: { unit: "ms", better: "lower", note: "parse, convert units, column arrays" } },
  },
  {
    id: "fit.oneGeometry",
    title: "One geometry fitted (731 points, automatic window)",
    repeats: 7,
    setup: prepare,
    measure() {
      const m = f!;
      let t = performance.now();
      m.fitSweep(m.squareLawFit, one!);
      const square = performance.now() - t;
      t = performance.now();
      const c0 = process.cpuUsage();
      m.fitSweep(m.ekvFit, one!);
      const ekv = performance.now() - t;
      const c = process.cpuUsage(c0);
      return { square, ekv, ekvCpu: (c.user + c.system) / 1000 };
    },
    figures: {
      square: { unit: "ms", better: "lower", target: 50, note: "square law, ladder of windows included" },
      ekv: { unit: "ms", better: "lower", target: 50, note: "EKV, every point ≥ 10 nA (staged fit)" },
      ekvCpu: { unit: "ms", better: "lower", note: "the EKV fit's process CPU time, for a loaded machine" },
    },
  },
  {
    id: "fit.wholeSet",
    title: "Whole 3.3 V set by the square law (both devices, 25 geometries × 3 temperatures each)",
    repeats: 3,
    setup: prepare,
    measure: () => fitAll(f!.squareLawFit),
    figures: setFigures("fits only; reading the two files is timed in fit.read", "geometries where no window holds enough points (typed error)"),
  },
  {
    id: "fit.wholeSetEkv",
    title: "Whole 3.3 V set by EKV (both devices, every geometry and temperature, every point ≥ 10 nA)",
    repeats: 1,
    setup: prepare,
    measure: () => fitAll(f!.ekvFit),
    figures: setFigures("fits only; one repeat (the set takes tens of seconds on a loaded machine)", "fits that threw a typed error"),
  },
]);
