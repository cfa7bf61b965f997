/**
 * Characterisation and gm/ID sizing against the simulator and the silicon.
 * References: ngspice 39 BSIM4 with the GF180MCU library (`sm141064.ngspice`,
 * section typical) for the tables and the sized devices; the kit's published
 * measurements (`data/pdk180/nfet_03v3_meas_id.csv`, `pfet_03v3_meas_id.csv`) for
 * the table's currents; the gm/ID limits 1/(n·UT) (weak inversion; Enz,
 * Krummenacher & Vittoz, Analog Integrated Circuits and Signal Processing 8, 1995)
 * and 2/VOV (strong inversion, square law; Silveira, Flandre & Jespers, IEEE JSSC
 * 31(9), 1996, fig. 1). One characterisation per device for the whole file
 * (cached in .pinchoff-cache/ under the project), on a small grid: 12 lengths 25 %
 * apart, VGS in 50 mV steps, VDS in 0.3 V steps, VSB 0 and 0.6 V, at 25 °C (the
 * measurements' temperature).
 */
import { readFileSync } from "node:fs";
import { resolve } from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { InfeasibleError, InputError } from "../lib/errors.js";
import { characterize, evenGrid, tableCsv, tableFingerprint, type DeviceTable, type SweepGrid } from "../lib/process/characterize.js";
import { builtinProcessFile, checkProcess, readProcess, type ProcessDescription } from "../lib/process/description.js";
import { simulateDevices } from "../lib/process/device-check.js";
import { deviceLookup, emptyPoint, lookupInto } from "../lib/process/lookup.js";
import { Derivation } from "../lib/record/derivation.js";
import { sizeByEfficiency, sizeByEfficiencyForProcess, type EfficiencyDesign, type EfficiencySpec } from "../lib/sizing/gm-id.js";
import { SimulatorError } from "../lib/spice/run.js";
import { expectReevaluates } from "./support/reevaluate.js";

const cache = resolve(".pinchoff-cache");
const builtin = JSON.parse(readFileSync(builtinProcessFile(), "utf8")) as Record<string, unknown>;
const proc: ProcessDescription = checkProcess({ ...builtin, temperature: 25 }, builtinProcessFile());
const lengths = [0.5, 0.6, 0.7, 0.85, 1, 1.2, 1.5, 2, 2.5, 3, 4, 5].map((x) => x * 1e-6);
const grid: SweepGrid = { l: lengths, vgs: evenGrid(0, 3.3, 67), vds: evenGrid(0, 3.3, 12), vsb: [0, 0.6] };
const tables: Record<"nmos" | "pmos", DeviceTable> = {} as never;

beforeAll(async () => {
  const [n, p] = await Promise.all([characterize(proc, { polarity: "nmos", grid, cache }), characterize(proc, { polarity: "pmos", grid, cache })]);
  tables.nmos = n;
  tables.pmos = p;
}, 600_000);

/** A small seeded generator (LCG, Numerical Recipes constants), so the cases are the same every run. */
function rng(seed: number) {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
}

describe("gm/ID sizing of single devices against ngspice 39 BSIM4 (GF180MCU sm141064.ngspice typical)", () => {
  it("lands the simulated ID and gm/ID within 2 % on 150 seeded NMOS and PMOS cases (at least 120 sized, the rest refused with typed errors) from 1 µA to 1 mA (parallel devices above the widest W, own-width tables below 5 µm), and says how far the square law lands", async () => {
    const r = rng(20261202);
    const ls = [0.5, 1, 2, 5, 0.55, 0.65, 0.9, 1.1, 1.35, 1.75, 2.2, 2.8, 3.5, 4.5].map((x) => x * 1e-6);
    const drawn: Array<{ polarity: "nmos" | "pmos"; spec: EfficiencySpec }> = [];
    for (let k = 0; k < 150; k++) {
      const polarity = k % 2 ? "pmos" : "nmos";
      // ID log-uniform from 1 µA to 1 mA; the first and last case of each polarity pinned at the ends.
      const u = k < 2 ? 0 : k >= 148 ? 1 : r();
      drawn.push({ polarity, spec: { id: 1e-6 * 1000 ** u, gmId: 5 + 15 * r(), l: ls[Math.floor(r() * ls.length)]!, vds: 1.2 } });
    }
    const refused: string[] = [];
    const sized = await Promise.all(
      drawn.map(({ polarity, spec }) =>
        sizeByEfficiencyForProcess(proc, polarity, spec, { table: tables[polarity], cache }).catch((e: unknown) => {
          // Outside what the kit can draw (W under its narrowest, more than 1000 parallel devices) or a gm/ID the device cannot reach at this L: refused with a typed error, not sized.
          expect(e instanceof InputError || e instanceof InfeasibleError, String(e)).toBe(true);
          refused.push(`${polarity} ID=${spec.id!.toExponential(2)} gm/ID=${spec.gmId!.toFixed(1)} L=${spec.l}: ${(e as Error).message.slice(0, 60)}`);
          return undefined;
        }),
      ),
    );
    const cases = sized.filter((d): d is EfficiencyDesign => d !== undefined);
    expect(cases.length).toBeGreaterThanOrEqual(120);
    const sim = await simulateDevices(proc, cases.map((d) => ({ polarity: d.polarity, w: d.wDrawn, m: d.multiplier, l: d.l, vgs: d.vgs, vds: d.vds })));
    // The square-law design of the same targets, drawn the same way (parallel devices above 100 µm, the kit's W range).
    const square = await simulateDevices(
      proc,
      cases.map((d) => {
        const m = Math.max(1, Math.ceil(d.squareLaw.w / 100e-6));
        return { polarity: d.polarity, w: Math.max(0.22e-6, d.squareLaw.w / m), m, l: d.l, vgs: Math.min(3.3, d.squareLaw.vgs), vds: d.vds };
      }),
    );
    let worstId = 0, worstG = 0;
    const sq: number[] = [];
    cases.forEach((d, k) => {
      const s = sim.values[k]!;
      const eId = s.id / d.id - 1;
      const eG = s.gm / s.id / d.gmId - 1;
      worstId = Math.max(worstId, Math.abs(eId));
      worstG = Math.max(worstG, Math.abs(eG));
      const what = `case ${k}: ${d.polarity} L=${d.l} ID=${d.id} gm/ID=${d.gmId} W=${d.wDrawn} m=${d.multiplier}`;
      expect(Math.abs(eId), what).toBeLessThan(0.02);
      expect(Math.abs(eG), what).toBeLessThan(0.02);
      sq.push(Math.abs(square.values[k]!.id / d.id - 1));
    });
    sq.sort((a, b) => a - b);
    const ids = cases.map((d) => d.id);
    const parallel = cases.filter((d) => d.multiplier > 1).length;
    const narrow = cases.filter((d) => d.wDrawn < 5e-6).length;
    console.log(
      `gm/ID sizing: ${cases.length} cases of ${drawn.length} drawn (${refused.length} refused), ID ${Math.min(...ids).toExponential(2)}…${Math.max(...ids).toExponential(2)} A, ${parallel} as parallel devices, ${narrow} under 5 µm from own-width tables; ` +
        `worst simulated ID ${(100 * worstId).toFixed(2)} %, gm/ID ${(100 * worstG).toFixed(2)} %. ` +
        `Square-law sizing (card fitted to the table at VOV = 0.5 V) on the same cases: median ID error ${(100 * sq[sq.length >> 1]!).toFixed(1)} %, worst ${(100 * sq[sq.length - 1]!).toFixed(1)} %` +
        (refused.length ? `\nrefused: ${refused.join("; ")}` : ""),
    );
    // The whole range is covered: both ends of the current range, parallel devices and narrow ones, both polarities.
    expect(Math.min(...ids)).toBeLessThan(1.01e-6);
    expect(Math.max(...ids)).toBeGreaterThan(0.99e-3);
    expect(parallel).toBeGreaterThan(5);
    expect(narrow).toBeGreaterThan(5);
    expect(cases.filter((d) => d.polarity === "pmos").length).toBeGreaterThan(50);
  }, 600_000);

  it("draws a width above the widest device as m devices in parallel, records m and W/m, and the simulator agrees", async () => {
    const rec = new Derivation("gm/ID sizing, 1 mA");
    const d = sizeByEfficiency(tables.nmos, { id: 1e-3, gmId: 18, l: 2e-6, vds: 1.2 }, proc, rec);
    expect(d.multiplier).toBeGreaterThan(1);
    expect(d.wDrawn).toBeLessThanOrEqual(100e-6);
    expect(d.multiplier * d.wDrawn).toBeCloseTo(d.w, 7);
    const data = rec.toJSON();
    expect(data.steps.some((s) => s.kind === "formula" && s.formula === "widthPerDevice")).toBe(true);
    expect(expectReevaluates(rec)).toBeGreaterThanOrEqual(7);
    const sim = await simulateDevices(proc, [{ polarity: "nmos", w: d.wDrawn, m: d.multiplier, l: d.l, vgs: d.vgs, vds: d.vds }]);
    expect(sim.deck).toMatch(new RegExp(`M0 d0 g0 0 b0 nmos_3p3 W=\\S+ L=\\S+ m=${d.multiplier}`));
    expect(Math.abs(sim.values[0]!.id / 1e-3 - 1)).toBeLessThan(0.02);
  });

  it("sizes a narrow device from a table at its own width, which the reference table misses", async () => {
    const spec: EfficiencySpec = { id: 2e-6, gmId: 8, l: 1e-6, vds: 1.2 };
    const fromRef = sizeByEfficiency(tables.nmos, spec, proc);
    expect(fromRef.wDrawn).toBeLessThan(2e-6);
    const rec = new Derivation("narrow device");
    const d = await sizeByEfficiencyForProcess(proc, "nmos", spec, { table: tables.nmos, cache, rec });
    expect(d.tableFingerprint).not.toBe(tables.nmos.fingerprint);
    expect(JSON.stringify(rec.toJSON().steps)).toContain("Table at the device's own width");
    const sim = await simulateDevices(proc, [fromRef, d].map((x) => ({ polarity: "nmos" as const, w: x.wDrawn, l: x.l, vgs: x.vgs, vds: x.vds })));
    const eRef = Math.abs(sim.values[0]!.id / 2e-6 - 1), eOwn = Math.abs(sim.values[1]!.id / 2e-6 - 1);
    expect(eOwn).toBeLessThan(0.02);
    expect(eOwn).toBeLessThan(eRef);
  });

  it("records each lookup and interpolation with the table's fingerprint, and every formula step re-evaluates with units", () => {
    const rec = new Derivation("gm/ID sizing");
    const d = sizeByEfficiency(tables.nmos, { id: 50e-6, gmId: 12, l: 0.9e-6, vds: 1.2 }, proc, rec);
    const data = rec.toJSON();
    expect(data.steps.filter((s) => s.kind === "note" && s.title.startsWith("Table lookup at L")).length).toBe(2);
    expect(data.steps.some((s) => s.kind === "formula" && s.formula === "currentDensityBetweenLengths")).toBe(true);
    expect(JSON.stringify(data.steps)).toContain(tables.nmos.fingerprint.slice(0, 12));
    expect(expectReevaluates(rec)).toBeGreaterThanOrEqual(6);
    expect(d.gm).toBeCloseTo(12 * 50e-6, 12);
    expect(d.ft).toBeCloseTo(d.gm / (2 * Math.PI * d.cgg), 0);
    expect(d.intrinsicGain).toBeGreaterThan(10);
  });

  it("chooses the shortest L that meets an intrinsic-gain target, and sizes from gm and a power budget", () => {
    const short = sizeByEfficiency(tables.nmos, { id: 20e-6, gmId: 12, l: 0.5e-6, vds: 1.2 }, proc);
    const target = short.intrinsicGain * 2;
    const d = sizeByEfficiency(tables.nmos, { id: 20e-6, gmId: 12, intrinsicGain: target, vds: 1.2 }, proc);
    expect(d.intrinsicGain).toBeGreaterThanOrEqual(target * 0.99);
    const shorter = sizeByEfficiency(tables.nmos, { id: 20e-6, gmId: 12, l: d.l * 0.9, vds: 1.2 }, proc);
    expect(shorter.intrinsicGain).toBeLessThan(target);
    const b = sizeByEfficiency(tables.nmos, { gm: 1e-3, power: 330e-6, vdd: 3.3, l: 1e-6, vds: 1.2 }, proc);
    expect(b.id).toBeCloseTo(100e-6, 12);
    expect(b.gmId).toBeCloseTo(10, 9);
  });
});

describe("the table against outside references", () => {
  it("stays inside the gm/ID limits: below 1/UT (n ≥ 1) everywhere, below 2/VOV in strong inversion", () => {
    const UT = (1.380649e-23 * (273.15 + 25)) / 1.602176634e-19; // SI 2019 exact constants
    for (const t of [tables.nmos, tables.pmos]) {
      const lk = deviceLookup(t);
      const p = emptyPoint();
      let maxG = 0;
      for (const l of t.grid.l)
        for (const v of t.grid.vgs.filter((x) => x >= 0.2)) {
          lookupInto(lk, l, v, 1.2, 0, p);
          maxG = Math.max(maxG, p.gmId);
          const vov = v - p.vth;
          if (vov > 0.3) expect(p.gmId).toBeLessThan(2 / vov);
        }
      expect(maxG).toBeLessThan(1 / UT);
      // n between 1 and 2 in weak inversion (common practice for bulk CMOS).
      expect(1 / (maxG * UT)).toBeLessThan(2);
    }
  });

  it("gives the measured currents of the kit's devices (GF180MCU published measurements, 25 °C, VBS = 0)", () => {
    const report: string[] = [];
    for (const [polarity, file] of [["nmos", "nfet_03v3_meas_id.csv"], ["pmos", "pfet_03v3_meas_id.csv"]] as const) {
      const t = tables[polarity];
      const lk = deviceLookup(t);
      const p = emptyPoint();
      const errs: number[] = [];
      for (const line of readFileSync(resolve("data/pdk180", file), "utf8").split("\n").slice(1)) {
        const [W, L, , temp, vds, vgs, vbs, id] = line.split(",").map(Number) as number[];
        if (W !== 10 || temp !== 25 || vbs !== 0 || !(L === 0.5 || L === 1 || L === 5)) continue;
        const avds = Math.abs(vds!), avgs = Math.abs(vgs!);
        // Points on the table's grid only (VDS in 0.3 V steps), in strong inversion where the current is well above leakage.
        if (Math.abs(avds / 0.3 - Math.round(avds / 0.3)) > 1e-6 || avds < 0.29 || avgs < 1.3) continue;
        lookupInto(lk, L * 1e-6, avgs, avds, 0, p);
        errs.push(Math.abs((p.idw * 10e-6) / Math.abs(id!) - 1));
      }
      errs.sort((a, b) => a - b);
      expect(errs.length).toBeGreaterThan(50);
      const median = errs[errs.length >> 1]!;
      const p90 = errs[Math.floor(errs.length * 0.9)]!;
      report.push(`${polarity}: ${errs.length} points, median ${(100 * median).toFixed(3)} %, 90th percentile ${(100 * p90).toFixed(3)} %, worst ${(100 * errs[errs.length - 1]!).toFixed(3)} %`);
      expect(median).toBeLessThan(0.05);
    }
    console.log(`table vs measured ID (W = 10 µm, L = 0.5/1/5 µm, |VGS| ≥ 1.3 V): ${report.join("; ")}`);
  });
});

describe("characterisation: one deck per core, an instance per (L, VSB)", () => {
  it("gives each grid point the operating point of a lone device (the instances on shared sources do not load one another)", async () => {
    const picks: Array<{ polarity: "nmos" | "pmos"; li: number; b: number; d: number; g: number }> = [];
    for (const polarity of ["nmos", "pmos"] as const)
      for (const [li, b, d, g] of [[0, 0, 4, 30], [5, 1, 11, 66], [11, 1, 2, 20], [7, 0, 8, 45]] as const) picks.push({ polarity, li, b, d, g });
    const sim = await simulateDevices(
      proc,
      picks.map((x) => ({ polarity: x.polarity, w: tables[x.polarity].w, l: grid.l[x.li]!, vgs: grid.vgs[x.g]!, vds: grid.vds[x.d]!, vsb: grid.vsb[x.b]! })),
    );
    picks.forEach((x, k) => {
      const t = tables[x.polarity];
      const i = ((x.li * grid.vsb.length + x.b) * grid.vds.length + x.d) * grid.vgs.length + x.g;
      const v = sim.values[k]!;
      expect(Math.abs((t.data.idw[i]! * t.w) / v.id - 1)).toBeLessThan(1e-6);
      expect(Math.abs((t.data.gmw[i]! * t.w) / v.gm - 1)).toBeLessThan(1e-6);
      expect(Math.abs((t.data.cggw[i]! * t.w) / v.cgg - 1)).toBeLessThan(1e-6);
    });
  });
});

describe("characterisation: cache and output", () => {
  it("returns the cached table for the same fingerprint and changes the fingerprint with the grid", async () => {
    const t0 = performance.now();
    const again = await characterize(proc, { polarity: "nmos", grid, cache });
    expect(performance.now() - t0).toBeLessThan(5000);
    expect(again.fingerprint).toBe(tables.nmos.fingerprint);
    expect(Array.from(again.data.idw.subarray(0, 500))).toEqual(Array.from(tables.nmos.data.idw.subarray(0, 500)));
    expect(tableFingerprint(proc, "nmos", "typical", 10e-6, { ...grid, vsb: [0] })).not.toBe(tables.nmos.fingerprint);
    expect(tableFingerprint(proc, "nmos", "ss", 10e-6, grid)).not.toBe(tables.nmos.fingerprint);
  });

  it("writes CSV with one row per point and the derived ratios", () => {
    const csv = tableCsv(tables.pmos).split("\n");
    expect(csv[0]).toMatch(/^l_m,vsb_v,vds_v,vgs_v,id_per_w_a_m,gm_id_s_a,.*ft_hz$/);
    expect(csv.length - 2).toBe(12 * 2 * 12 * 67);
  });
});

describe("bad input", () => {
  it("refuses a gm/ID above the weak-inversion limit, naming the limit and the table", () => {
    expect(() => sizeByEfficiency(tables.nmos, { id: 1e-6, gmId: 45, l: 1e-6, vds: 1.2 }, proc)).toThrow(InputError);
    expect(() => sizeByEfficiency(tables.nmos, { id: 1e-6, gmId: 45, l: 1e-6, vds: 1.2 }, proc)).toThrow(/gm\/ID at most .* weak-inversion limit 1\/\(n·UT\) of nmos_3p3/);
  });

  it("refuses a current the device cannot carry within the process's W range, and a gm/ID beyond the supply", () => {
    expect(() => sizeByEfficiency(tables.nmos, { id: 0.5, gmId: 10, l: 5e-6, vds: 1.2 }, proc)).toThrow(InfeasibleError);
    expect(() => sizeByEfficiency(tables.nmos, { id: 0.5, gmId: 10, l: 5e-6, vds: 1.2 }, proc)).toThrow(/devices of the widest W \(0.0001 m\), above the 1000 allowed .* within the 3.3 V supply/);
    expect(() => sizeByEfficiency(tables.nmos, { id: 5e-3, gmId: 10, l: 5e-6, vds: 1.2, maxMultiplier: 4 }, proc)).toThrow(/above the 4 allowed/);
    expect(() => sizeByEfficiency(tables.nmos, { id: 1e-9, gmId: 5, l: 0.5e-6, vds: 1.2 }, proc)).toThrow(/W from 2.2e-7 m to 0.0001 m/);
    expect(() => sizeByEfficiency(tables.nmos, { id: 1e-3, gmId: 0.3, l: 1e-6, vds: 3.3 }, proc)).toThrow(InfeasibleError);
    expect(() => sizeByEfficiency(tables.nmos, { id: 1e-3, gmId: 0.3, l: 1e-6, vds: 3.3 }, proc)).toThrow(/beyond the table's supply range/);
    // A gm/ID whose VDsat exceeds VDS would leave the device in triode.
    expect(() => sizeByEfficiency(tables.nmos, { id: 1e-4, gmId: 2, l: 1e-6, vds: 0.3 }, proc)).toThrow(/would be in triode/);
  });

  it("refuses an L outside the process range or the table", () => {
    expect(() => sizeByEfficiency(tables.nmos, { id: 1e-5, gmId: 10, l: 0.1e-6, vds: 1.2 }, proc)).toThrow(/L from 2.8e-7 m to 0.00005 m/);
    expect(() => sizeByEfficiency(tables.nmos, { id: 1e-5, gmId: 10, l: 8e-6, vds: 1.2 }, proc)).toThrow(/the table's characterised lengths/);
    expect(() => sizeByEfficiency(tables.nmos, { id: 1e-5, gmId: 10, l: 1e-6, vds: 5 }, proc)).toThrow(/VDS from 0 to 3.3/);
  });

  it("refuses a process description whose library does not exist, and reports a missing section or device from ngspice", async () => {
    expect(() => checkProcess({ ...builtin, library: { file: "../data/pdk180/missing.ngspice", section: "typical" } }, builtinProcessFile())).toThrow(/library.file: got "..\/data\/pdk180\/missing.ngspice", expected an existing file/);
    expect(() => checkProcess({ ...builtin, version: 2 }, builtinProcessFile())).toThrow(InputError);
    expect(() => checkProcess({ ...builtin, extra: 1 }, builtinProcessFile())).toThrow(/extra/);
    expect(() => readProcess("/nonexistent/process.json")).toThrow(/cannot read the process description/);
    const small: SweepGrid = { l: [1e-6], vgs: [0, 1], vds: [1], vsb: [0] };
    const noSection = checkProcess({ ...builtin, library: { file: "../data/pdk180/sm141064.ngspice", section: "nosuch" } }, builtinProcessFile());
    await expect(characterize(noSection, { polarity: "nmos", grid: small, cache: false })).rejects.toThrow(/has no section "nosuch"/);
    const noDevice = checkProcess({ ...builtin, devices: { ...(builtin.devices as object), nmos: { model: "nmos_9v9", l: { min: 0.28e-6, max: 50e-6 }, w: { min: 0.22e-6, max: 100e-6 } } } }, builtinProcessFile());
    await expect(characterize(noDevice, { polarity: "nmos", grid: small, cache: false })).rejects.toThrow(SimulatorError);
    await expect(characterize(noDevice, { polarity: "nmos", grid: small, cache: false })).rejects.toThrow(/no device model for m0_0/);
  });
});
