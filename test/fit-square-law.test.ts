/**
 * The square-law fit against two references:
 * - ngspice 39 Level 1: curves generated from known cards (NMOS and PMOS) return
 *   the card (threshold within 5 mV, KP within 2 %) without noise, and within
 *   four standard errors with seeded 1 % noise;
 * - the open 180 nm process's published measurements (data/pdk180: GF180MCU
 *   3.3 V devices, W = 10 µm, 25 °C; google/globalfoundries-pdk-libs-gf180mcu_fd_pr,
 *   Apache-2.0): inside the window the fit reports, RMS relative error ≤ 5 % at
 *   every L (0.28–10 µm), NMOS and PMOS. Prints the README's square-law table.
 */
import { mulberry32 } from "../lib/random.js";
import { describe, expect, it } from "vitest";
import { InputError } from "../lib/errors.js";
import { describeWindow, fitSweep, squareLawWindows, type FitWindow } from "../lib/fit/fit.js";
import { squareLawFit } from "../lib/fit/models.js";
import { parseMeasurements, readMeasurements } from "../lib/measure/read.js";
import { geometries, select } from "../lib/measure/select.js";
import { runNgspice } from "./support/ngspice.js";

interface Card {
  polarity: "nmos" | "pmos";
  vto: number;
  kp: number;
  lambda: number;
}

/** Transfer curve at |VDS| = 0.05 V and output curves at four |VGS|, from ngspice Level 1, as a long-layout CSV. */
function ngspiceCsv(card: Card, w: number, l: number): string {
  const s = card.polarity === "nmos" ? 1 : -1;
  const pts: [number, number][] = [];
  for (let g = 0; g <= 33; g++) pts.push([s * g * 0.1, s * 0.05]);
  for (const g of [1.2, 1.6, 2.0, 2.4]) for (let d = 1; d <= 33; d++) pts.push([s * g, s * d * 0.1]);
  const circuit = [
    `.model M ${card.polarity} level=1 vto=${card.vto} kp=${card.kp} lambda=${card.lambda} is=0`,
    `M1 d g 0 0 M w=${w} l=${l}`,
    "VD d 0 0",
    "VG g 0 0",
  ].join("\n");
  const control = pts.flatMap(([vg, vd]) => [`alter VD dc = ${vd.toFixed(4)}`, `alter VG dc = ${vg.toFixed(4)}`, "op", "print -i(VD)"]).join("\n");
  const printed = runNgspice({ circuit, control });
  expect(printed.length).toBe(pts.length);
  const rows = pts.map(([vg, vd], i) => `${w * 1e6},${l * 1e6},tt,27,${vd},${vg},0,${printed[i]![1]}`);
  return ["W (um),L (um),corner,temp,vds,vgs,vbs,id", ...rows].join("\n");
}

/** Seeded Gaussian noise (mulberry32 + Box–Muller), relative. */
function addNoise(csv: string, rel: number, seed: number): string {
  const rnd = mulberry32(seed);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - rnd())) * Math.cos(2 * Math.PI * rnd());
  const [head, ...rows] = csv.split("\n");
  return [head, ...rows.map((r) => r.replace(/,([^,]+)$/, (_, id: string) => `,${Number(id) * (1 + rel * gauss())}`))].join("\n");
}

const cards: Card[] = [
  { polarity: "nmos", vto: 0.62, kp: 180e-6, lambda: 0.04 },
  { polarity: "pmos", vto: -0.81, kp: 55e-6, lambda: 0.07 },
];

describe("square-law fit returns the card that generated the curves (ngspice 39 Level 1)", () => {
  for (const c of cards) {
    const csv = ngspiceCsv(c, 10e-6, 2e-6);
    it(`${c.polarity}: without noise, threshold within 5 mV and KP within 2 %`, () => {
      const f = fitSweep(squareLawFit, select(parseMeasurements(csv, `ngspice-${c.polarity}.csv`)));
      expect(f.meetsTarget).toBe(true);
      expect(Math.abs(f.card.vt0 - c.vto)).toBeLessThan(5e-3);
      expect(Math.abs(f.card.kp / c.kp - 1)).toBeLessThan(0.02);
      expect(Math.abs((f.card.lambda ?? 0) - c.lambda)).toBeLessThan(2e-3);
      expect(f.inWindow.rms!).toBeLessThan(1e-4);
    });
    it(`${c.polarity}: with 1 % seeded noise, within four standard errors`, () => {
      const f = fitSweep(squareLawFit, select(parseMeasurements(addNoise(csv, 0.01, 7), "noisy.csv")));
      const [vt, kp] = f.parameters;
      expect(Math.abs(vt!.value - Math.abs(c.vto))).toBeLessThan(4 * vt!.stdErr);
      expect(Math.abs(kp!.value - c.kp)).toBeLessThan(4 * kp!.stdErr);
      expect(vt!.stdErr).toBeLessThan(0.02);
      expect(f.inWindow.rms!).toBeGreaterThan(0.005);
      expect(f.inWindow.rms!).toBeLessThan(0.02);
    });
  }
});

describe("square-law fit on the open 180 nm measurements (GF180MCU 3.3 V, W = 10 µm, 25 °C)", () => {
  const sets = {
    nmos: readMeasurements("data/pdk180/nfet_03v3_meas_id.csv"),
    pmos: readMeasurements("data/pdk180/pfet_03v3_meas_id.csv"),
  };
  const sweep = (pol: "nmos" | "pmos", l: number) => select(sets[pol], { w: 10e-6, l: l * 1e-6, temp: 298.15, currentSign: pol === "pmos" ? "magnitude" : "spice" });
  const pct = (x: number) => `${(100 * x).toFixed(1)} %`;
  for (const pol of ["nmos", "pmos"] as const)
    for (const l of [0.28, 0.5, 1, 5, 10]) {
      it(`${pol} L = ${l} µm: RMS ≤ 5 % inside the reported window`, () => {
        const f = fitSweep(squareLawFit, sweep(pol, l));
        const [vt, kp, , , lambda] = f.parameters;
        // the README's square-law table is copied from these lines
        const lam = lambda!.held ? "held (0)" : lambda!.value < 1e-6 ? "0 (at bound)" : lambda!.value.toFixed(3);
        console.log(`| ${pol} | ${l} | ${describeWindow(f.window).replace(/\|VBS\| = 0 V/, "VBS = 0").replace(/\|/g, "\\|")} (${f.window.points} pts) | ${pct(f.inWindow.rms!)} | ${vt!.value.toFixed(3)} ± ${(vt!.stdErr * 1e3).toFixed(0)} mV | ${(kp!.value * 1e6).toFixed(1)} ± ${(kp!.stdErr * 1e6).toFixed(1)} µA/V² | ${lam} | ${(100 * f.accuracy.overall.rms!).toFixed(0)} % |`);
        expect(f.meetsTarget).toBe(true);
        expect(f.inWindow.rms!).toBeLessThanOrEqual(0.05);
        expect(f.window.chosen).toBe("auto");
        expect(f.window.vov).toBeDefined();
        // enough points to determine each free parameter several times over, threshold and k′ determined
        expect(f.window.points).toBeGreaterThanOrEqual(20);
        expect(vt!.stdErr).toBeLessThan(0.02);
        expect(kp!.stdErr).toBeLessThan(0.1 * kp!.value);
        // the card says where it holds
        expect(f.card.provenance).toContain(`window ${describeWindow(f.window)}`);
        // the same card outside its window is far off: the window matters
        expect(f.accuracy.overall.rms!).toBeGreaterThan(0.2);
      });
    }
  it("NMOS L = 0.28 µm: no rung over every |VDS| reaches 5 %, so the window limits |VDS| and says so", () => {
    // The output curves at this length are 0.5 V apart in VGS; velocity saturation bends them and DIBL makes
    // the output conductance grow with VDS, so a linear λ holds only over part of the drain range.
    const s = sweep("nmos", 0.28);
    const f = fitSweep(squareLawFit, s);
    expect(f.window.vds).toBeDefined();
    expect(f.window.vds![1]).toBeLessThanOrEqual(1);
    expect(f.window.saturationOnly).toBe(true);
    expect(describeWindow(f.window)).toContain(`|VDS| ≤ ${f.window.vds![1]} V`);
    expect(f.card.lambda).toBeGreaterThan(0);
    // the same overdrive band over every |VDS| of saturation misses the target
    const wide = fitSweep(squareLawFit, s, { window: { vov: f.window.vov, vbs: [0, 0], saturationOnly: true } });
    expect(wide.window.points).toBeGreaterThan(f.window.points);
    expect(wide.inWindow.rms!).toBeGreaterThan(0.05);
  });
  it("the triode window of the textbook extraction (|VDS| ≤ 0.1 V): λ held and left out of the card", () => {
    for (const pol of ["nmos", "pmos"] as const)
      for (const l of [0.28, 1, 10]) {
        const f = fitSweep(squareLawFit, sweep(pol, l), { window: { vov: [0.2, 1.0], vds: [0, 0.1], vbs: [0, 0] } });
        expect(f.window.chosen).toBe("user");
        expect(f.inWindow.rms!).toBeLessThanOrEqual(0.05);
        expect(f.parameters.find((q) => q.name === "lambda")!.held).toBe(true);
        expect(f.card.lambda).toBeUndefined();
        expect(f.card.provenance).toMatch(/\|VDS\| ≤ 0\.1 V.*lambda not fitted/);
      }
  });
  it("every geometry and temperature of the set (W 0.22–10 µm, L 0.28–10 µm, −40/25/125 °C) meets 5 % in its window", () => {
    let fits = 0;
    for (const pol of ["nmos", "pmos"] as const)
      for (const g of geometries(sets[pol])) {
        const f = fitSweep(squareLawFit, select(sets[pol], { w: g.w, l: g.l, temp: g.temp, corner: g.corner, currentSign: pol === "pmos" ? "magnitude" : "spice" }));
        expect.soft(f.inWindow.rms!, `${pol} W=${g.w} L=${g.l} T=${g.temp}: ${describeWindow(f.window)}`).toBeLessThanOrEqual(0.05);
        fits++;
      }
    expect(fits).toBe(150);
  }, 60_000);
  it("the automatic ladder narrows the drain range step by step: every |VDS|, saturation, saturation at bounded |VDS|, low-|VDS| triode", () => {
    const step = (w: FitWindow) => (w.vds ? (w.saturationOnly ? 2 : 3) : w.saturationOnly ? 1 : 0);
    const steps = squareLawWindows.map(step);
    expect(steps).toEqual([...steps].sort((a, b) => a - b));
    expect(new Set(steps)).toEqual(new Set([0, 1, 2, 3]));
    for (const w of squareLawWindows) {
      expect(w.vbs).toEqual([0, 0]);
      if (step(w) === 3) expect(w.vds![1]).toBeLessThanOrEqual(0.1);
    }
  });
  it("a window the user sets is used as given, and one without points is refused", () => {
    const s = select(sets.nmos, { w: 10e-6, l: 1e-6, temp: 298.15 });
    const f = fitSweep(squareLawFit, s, { window: { vov: [0.3, 0.7], vbs: [0, 0], saturationOnly: true } });
    expect(f.window.chosen).toBe("user");
    expect(f.window.saturationOnly).toBe(true);
    expect(() => fitSweep(squareLawFit, s, { window: { vov: [5, 6] } })).toThrow(InputError);
    expect(() => fitSweep(squareLawFit, s, { window: { vov: [5, 6] } })).toThrow(/at least 8 points .* in the fit window/);
  });
});
