/**
 * Plot building: the three figures of a solved stage (output family with load
 * line and bias point, transfer, gm and gm/ID) from plain numbers, and the size
 * of one notebook plot output. Invented four-resistor stage.
 */
import { synthesizeFourResistor } from "../../../lib/bias/synthesis.js";
import type { DeviceCard } from "../../../lib/device/card.js";
import { plotBundle, plotLibrary, stagePlots } from "../../../lib/plot/index.js";
import type { Amperes, AmperesPerVoltSquared, Meters, PerVolt, Volts } from "../../../lib/quantity.js";
import { defineCases } from "../case.js";
import { designShape } from "../../support/design-shape.js";

// Invented card (not a real part).
const card: DeviceCard = { name: "bench-n", polarity: "nmos", kp: 0.1 as AmperesPerVoltSquared, vt0: 1.8 as Volts, lambda: 0.01 as PerVolt };
const design = synthesizeFourResistor(designShape({
  topology: "four-resistor",
  card,
  supplies: { vdd: 5 as Volts },
  id: 1e-3 as Amperes,
  sizing: { w: 1e-6 as Meters, l: 1e-6 as Meters },
  drain: { vd: 3 as Volts },
  source: { vrs: 1 as Volts },
  gate: { current: 50e-6 as Amperes },
}));
// Keeps the results alive so the work is not optimised away.
let sink = 0;

export const cases = defineCases([
  {
    id: "plot.stageFigures",
    title: "Three stage figures built from a solved stage",
    setup() {
      for (let i = 0; i < 20; i++) sink += stagePlots(design.stage, design.analysis).output.figure.data.length;
    },
    measure() {
      const n = 50;
      const t0 = performance.now();
      for (let i = 0; i < n; i++) sink += stagePlots(design.stage, design.analysis).output.figure.data.length;
      const ms = (performance.now() - t0) / n;
      const b = plotBundle(stagePlots(design.stage, design.analysis).output, false);
      return { ms, outputKB: (JSON.stringify(b).length / 1024) | 0, libraryMB: plotLibrary().code.length / 2 ** 20 };
    },
    figures: {
      ms: { unit: "ms", better: "lower", target: 20, note: "per set of three figures; a cell re-run should feel instant" },
      outputKB: { unit: "kB", better: "lower", target: 200, note: "one plot output without the library (JSON spec + HTML + text)" },
      libraryMB: { unit: "MB", better: "lower", note: "plotly.min.js embedded once per notebook or report" },
    },
  },
]);
