/**
 * gm/ID sizing of one transistor from a characterisation table (published method:
 * Silveira, Flandre & Jespers, IEEE JSSC 31(9), 1264–1273, 1996).
 *
 * Method: at each characterised length bracketing L, the VGS at which the table's
 * gm/ID equals the target is found by bisection on the interpolated curve
 * (`lookup.ts`; gm/ID falls monotonically with VGS above the weak-inversion
 * plateau, and the highest crossing is taken); the figures there are read, mixed
 * between the two lengths in 1/L, and scaled by W = ID/(ID/W). An
 * intrinsic-gain target chooses the shortest L that meets it (bisection in 1/L,
 * then rounded up to the drawing grid). A gm and power-budget target sets
 * ID = P/VDD and gm/ID = gm/ID. Each lookup and interpolation is a recorded step
 * carrying the table's fingerprint. The square-law design of the same
 * specification is computed beside it (a Level 1 card fitted to the same table at
 * VOV = 0.5 V, or the caller's card) with its deviation.
 * Failure modes: a gm/ID above the table's weak-inversion plateau (≈ 1/(n·UT)),
 * below what the supply allows, a W or L outside the process range: `InputError`
 * or `InfeasibleError` naming the value, the range and the table.
 * Tolerance: the bisection stops at 1e-7 V in VGS and 1e-6 relative in L.
 */
import { InfeasibleError, InputError, requirePositive } from "../errors.js";
import * as dev from "../formulas/device.formulas.js";
import * as gid from "../formulas/gm-id.formulas.js";
import type { Amperes, AmperesPerMeter, AmperesPerVoltSquared, Count, Farads, FaradsPerMeter, PerVolt, Meters, Siemens, SiemensPerAmpere, Volts, Watts } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { checkGeometry, snapToGrid, type ProcessDescription } from "../process/description.js";
import { characterize, type CharacterizeOptions, type DeviceTable } from "../process/characterize.js";
import type { OverlapParameters, TableCapacitances } from "../device/capacitance-card.js";
import { deviceLookup, emptyPoint, lengthBracket, lookupAtLength, mixLengths, type DeviceLookup, type PointValues } from "../process/lookup.js";

export interface EfficiencySpec {
  /** Target drain current (A), or give `gm` and `power` (with `vdd`). */
  readonly id?: number;
  /** Target gm/ID (S/A). */
  readonly gmId?: number;
  /** Target transconductance (S) with a power budget (W) across `vdd`: ID = P/VDD, gm/ID = gm/ID. */
  readonly gm?: number;
  readonly power?: number;
  readonly vdd?: number;
  /** Channel length (m), or give `intrinsicGain` to choose the shortest L that meets it. */
  readonly l?: number;
  readonly intrinsicGain?: number;
  /** |VDS| and |VSB| of the operating point (V); VSB defaults to 0. */
  readonly vds: number;
  readonly vsb?: number;
  /** Most identical devices in parallel when W exceeds the process's widest device (default 1000). */
  readonly maxMultiplier?: number;
}

export interface SquareLawDesign {
  readonly kp: number;
  readonly vt: number;
  readonly vov: number;
  readonly w: number;
  readonly vgs: number;
  /** The table's current at the square-law W and VGS, and its deviation from the target. */
  readonly idFromTable: number;
  readonly deviation: { readonly w: number; readonly vgs: number; readonly id: number };
}

export interface EfficiencyDesign {
  readonly polarity: "nmos" | "pmos";
  readonly model: string;
  readonly tableFingerprint: string;
  readonly l: number;
  /** Total W from the table (m). */
  readonly w: number;
  /** Identical devices in parallel (the instance's `m`): 1 unless W exceeds the process's widest device. */
  readonly multiplier: number;
  /** Drawn W of each of the `multiplier` devices: W/m rounded to the drawing grid (when a process is given). */
  readonly wDrawn: number;
  readonly id: number;
  readonly gmId: number;
  readonly vgs: number;
  readonly vds: number;
  readonly vsb: number;
  readonly vth: number;
  readonly vdsat: number;
  readonly gm: number;
  readonly gds: number;
  readonly gmb: number;
  readonly intrinsicGain: number;
  /** Gate capacitances per width read from the table at the bias point (F/m): the source of the totals below and of a card's `tableCapacitances`. */
  readonly cggPerWidth: FaradsPerMeter;
  readonly cgsPerWidth: FaradsPerMeter;
  readonly cgdPerWidth: FaradsPerMeter;
  /** Totals at the sized W: the per-width figures times W (F). */
  readonly cgg: number;
  readonly cgs: number;
  readonly cgd: number;
  readonly ft: number;
  readonly squareLaw: SquareLawDesign;
}

const lookups = new WeakMap<DeviceTable, DeviceLookup>();
const prepared = (t: DeviceTable): DeviceLookup => {
  let lk = lookups.get(t);
  if (!lk) lookups.set(t, (lk = deviceLookup(t)));
  return lk;
};

const scratch = emptyPoint();

/** The VGS at which gm/ID equals the target at one characterised length, or why not. */
export function vgsForEfficiency(lk: DeviceLookup, li: number, gmId: number, vds: number, vsb: number): number {
  const vg = lk.table.grid.vgs;
  const g = (v: number) => lookupAtLength(lk, li, v, vds, vsb, scratch).gmId;
  // Highest grid VGS whose gm/ID is still ≥ target: the crossing is just above it.
  let k = vg.length - 1;
  let best = 0;
  while (k >= 0) {
    const gk = g(vg[k]!);
    if (gk > best) best = gk;
    if (gk >= gmId) break;
    k--;
  }
  const L = lk.table.grid.l[li]!;
  const where = `${lk.table.model} at L = ${L} m, |VDS| = ${vds} V, |VSB| = ${vsb} V (table ${lk.table.fingerprint.slice(0, 12)})`;
  if (k < 0) {
    for (const v of vg) best = Math.max(best, g(v));
    throw new InputError(gmId, `gm/ID at most ${best.toPrecision(4)} S/A, the weak-inversion limit 1/(n·UT) of ${where}`, "gmId");
  }
  if (k === vg.length - 1) {
    if (g(vg[k]!) === gmId) return vg[k]!;
    throw new InfeasibleError(`gm/ID ${gmId} S/A needs |VGS| above ${vg[k]} V, beyond the table's supply range; the lowest gm/ID there is ${g(vg[k]!).toPrecision(4)} S/A for ${where}`, "gmId");
  }
  let lo = vg[k]!, hi = vg[k + 1]!;
  for (let it = 0; it < 80 && hi - lo > 1e-7; it++) {
    const m = 0.5 * (lo + hi);
    if (g(m) >= gmId) lo = m;
    else hi = m;
  }
  return 0.5 * (lo + hi);
}

interface AtLength {
  vgs: number;
  p: PointValues;
}

function atLength(lk: DeviceLookup, li: number, gmId: number, vds: number, vsb: number): AtLength {
  const vgs = vgsForEfficiency(lk, li, gmId, vds, vsb);
  const p = lookupAtLength(lk, li, vgs, vds, vsb, emptyPoint());
  return { vgs, p: { ...p } };
}

/** Figures at (L, gm/ID): both bracketing lengths, mixed in 1/L. */
function atEfficiency(lk: DeviceLookup, l: number, gmId: number, vds: number, vsb: number) {
  const br = lengthBracket(lk, l);
  const a = atLength(lk, br.i, gmId, vds, vsb);
  if (br.t === 0 || lk.table.grid.l.length === 1) return { br, a, b: a, vgs: a.vgs, p: a.p };
  const b = atLength(lk, br.i + 1, gmId, vds, vsb);
  const ls = lk.table.grid.l;
  const p = mixLengths(a.p, b.p, br.t, ls[br.i]!, ls[br.i + 1]!, emptyPoint());
  return { br, a, b, vgs: a.vgs + br.t * (b.vgs - a.vgs), p };
}

/** The shortest L in the table whose intrinsic gain at this gm/ID reaches the target. */
function lengthForGain(lk: DeviceLookup, a0: number, gmId: number, vds: number, vsb: number): number {
  const ls = lk.table.grid.l;
  const gain = (l: number) => {
    const r = atEfficiency(lk, l, gmId, vds, vsb);
    return (r.p.gmId * r.p.idw) / r.p.gdsw;
  };
  let prev = gain(ls[0]!);
  if (prev >= a0) return ls[0]!;
  for (let i = 1; i < ls.length; i++) {
    const g = gain(ls[i]!);
    if (g >= a0) {
      let lo = Math.log(ls[i - 1]!), hi = Math.log(ls[i]!);
      for (let it = 0; it < 60 && hi - lo > 1e-6; it++) {
        const m = 0.5 * (lo + hi);
        if (gain(Math.exp(m)) >= a0) hi = m;
        else lo = m;
      }
      return Math.exp(hi);
    }
    prev = Math.max(prev, g);
  }
  throw new InfeasibleError(`intrinsic gain ${a0} is above the ${prev.toPrecision(4)} the longest characterised L (${ls[ls.length - 1]} m) gives at gm/ID = ${gmId} S/A`, "intrinsicGain");
}

/**
 * Size one transistor by the gm/ID method. `process` (optional) checks W and L
 * against its ranges and rounds W and L to its grid.
 */
export function sizeByEfficiency(table: DeviceTable, spec: EfficiencySpec, process?: ProcessDescription, rec?: Derivation): EfficiencyDesign {
  const lk = prepared(table);
  const fp = table.fingerprint.slice(0, 12);
  const vds = requirePositive(spec.vds, "vds", "|VDS| in V, > 0");
  const vsb = spec.vsb ?? 0;
  if (typeof vsb !== "number" || !Number.isFinite(vsb) || vsb < 0) throw new InputError(vsb, "|VSB| in V, ≥ 0", "vsb");
  let id: number, gmId: number;
  if (spec.gm !== undefined || spec.power !== undefined) {
    const gm = requirePositive(spec.gm!, "gm", "a transconductance in S, > 0");
    const p = requirePositive(spec.power!, "power", "a power budget in W, > 0");
    const vdd = requirePositive(spec.vdd!, "vdd", "the branch supply in V, > 0");
    id = rec ? rec.calc(gid.currentForBudget, [p as Watts, vdd as Volts] as const) : p / vdd;
    gmId = gm / id;
    rec?.step(dev.transconductanceEfficiency, [gm, id], gmId, "the least current the budget allows sets the highest gm/ID");
  } else {
    id = requirePositive(spec.id!, "id", "a drain current in A, > 0");
    gmId = requirePositive(spec.gmId!, "gmId", "gm/ID in S/A, > 0");
  }
  if (rec) {
    rec.input("I_D", id, "current", "specification");
    rec.input("gm/ID", gmId, "inverseVoltageEfficiency", "specification");
    rec.input("|V_DS|", vds, "voltage", "specification");
    rec.input("|V_SB|", vsb, "voltage", "specification");
    rec.cite("gm/ID method: Silveira, Flandre & Jespers, IEEE JSSC 31(9), 1264–1273, 1996");
    rec.note("Characterisation table", `${table.model} (${table.polarity}) of ${table.process}, library section ${table.section}, ${table.temperature} °C, reference W = ${table.w} m; fingerprint ${table.fingerprint}.`);
  }
  let l: number;
  if (spec.l !== undefined) {
    l = requirePositive(spec.l, "l", "a channel length in m, > 0");
    if (process) l = checkGeometry(process, table.polarity, "l", l, "l");
  } else {
    const a0 = requirePositive(spec.intrinsicGain!, "intrinsicGain", "an intrinsic gain gm/gds > 0 (or give l)");
    l = lengthForGain(lk, a0, gmId, vds, vsb);
    if (process) l = Math.min(checkGeometry(process, table.polarity, "l", Math.ceil(l / process.devices[table.polarity].grid - 1e-9) * process.devices[table.polarity].grid, "l"), table.grid.l[table.grid.l.length - 1]!);
    rec?.note("Length from the intrinsic-gain target", `The shortest L whose gm/gds at gm/ID = ${gmId} S/A reaches ${a0} is ${l} m (bisection between characterised lengths, rounded up to the drawing grid).`);
  }
  const r = atEfficiency(lk, l, gmId, vds, vsb);
  const ls = table.grid.l;
  if (r.p.vdsat > vds)
    throw new InfeasibleError(`gm/ID ${gmId} S/A needs |VGS| = ${r.vgs.toFixed(3)} V, where VDsat = ${r.p.vdsat.toFixed(3)} V exceeds |VDS| = ${vds} V: the device would be in triode; raise gm/ID or |VDS| (${table.model}, L = ${l} m, table ${fp})`, "gmId");
  let jd = r.p.idw;
  if (rec) {
    rec.input("L", l, "length", spec.l !== undefined ? "specification" : "chosen for the intrinsic gain");
    rec.note(`Table lookup at L = ${ls[r.br.i]} m`, `gm/ID = ${gmId} S/A at |VGS| = ${r.a.vgs.toFixed(5)} V (bisection on the Hermite-interpolated table, table ${fp}): I_D/W = ${r.a.p.idw.toPrecision(6)} A/m, g_ds/I_D = ${(r.a.p.gdsw / r.a.p.idw).toPrecision(6)} S/A, C_gg/W = ${r.a.p.cggw.toPrecision(6)} F/m, V_th = ${r.a.p.vth.toFixed(4)} V, V_Dsat = ${r.a.p.vdsat.toFixed(4)} V.`);
    if (r.br.t > 0 && r.br.t < 1) {
      rec.note(`Table lookup at L = ${ls[r.br.i + 1]} m`, `gm/ID = ${gmId} S/A at |VGS| = ${r.b.vgs.toFixed(5)} V (table ${fp}): I_D/W = ${r.b.p.idw.toPrecision(6)} A/m, g_ds/I_D = ${(r.b.p.gdsw / r.b.p.idw).toPrecision(6)} S/A, C_gg/W = ${r.b.p.cggw.toPrecision(6)} F/m.`);
      jd = rec.calc(gid.currentDensityBetweenLengths, [r.a.p.idw as AmperesPerMeter, r.b.p.idw as AmperesPerMeter, l as Meters, ls[r.br.i]! as Meters, ls[r.br.i + 1]! as Meters] as const, `interpolated between the characterised lengths; VGS, g_ds/I_D, C_gg/W and V_Dsat likewise (table ${fp})`);
    }
  }
  const w = rec ? rec.calc(gid.widthForCurrentDensity, [id as Amperes, jd as AmperesPerMeter] as const) : id / jd;
  if (!(w > 0) || !Number.isFinite(w)) throw new InfeasibleError(`no finite width carries ${id} A at gm/ID = ${gmId} S/A`, "w");
  const m = process ? multiplierFor(process, table, w, spec.maxMultiplier, { id, gmId, l, jd, vgs: r.vgs }) : 1;
  let wUnit = w;
  if (m > 1) {
    rec?.input("m", m, "count", `the fewest parallel devices no wider than ${process!.devices[table.polarity].w.max} m, the process's widest`);
    wUnit = rec ? rec.calc(gid.widthPerDevice, [w as Meters, m as Count] as const) : w / m;
  }
  if (process) checkGeometry(process, table.polarity, "w", wUnit, `W for I_D = ${id} A at gm/ID = ${gmId} S/A, L = ${l} m`);
  const wDrawn = process ? snapToGrid(process, table.polarity, wUnit) : wUnit;
  const gm = rec ? rec.calc(gid.transconductanceFromEfficiency, [gmId as SiemensPerAmpere, id as Amperes] as const) : gmId * id;
  const gdsId = r.p.gdsw / r.p.idw;
  const gds = rec ? rec.calc(gid.outputConductanceFromRatio, [gdsId as SiemensPerAmpere, id as Amperes] as const, `g_ds/I_D = ${gdsId.toPrecision(6)} S/A from the table (${fp})`) : gdsId * id;
  const a0 = rec ? rec.calc(dev.intrinsicGain, [gm as Siemens, gds as Siemens] as const) : gm / gds;
  const cgg = rec ? rec.calc(gid.gateCapacitanceFromDensity, [r.p.cggw as FaradsPerMeter, w as Meters] as const, `C_gg/W from the table (${fp})`) : r.p.cggw * w;
  const ft = rec ? rec.calc(gid.transitFrequency, [gm as Siemens, cgg as Farads] as const) : gm / (2 * Math.PI * cgg);
  // Square law beside it: a Level 1 card fitted to the same table at VOV = 0.5 V.
  const sq = squareLawBeside(lk, l, r.p.vth, id, gmId, vds, vsb, w, r.vgs, rec);
  if (wUnit < table.w / 2)
    rec?.find("caution", `W = ${wUnit.toPrecision(3)} m is under half the table's reference width ${table.w} m: narrow-width effects are not in the table (ID/W of the open 180 nm NMOS is 6 % lower at W = 2 µm than at 10 µm); characterise at a width near this one or verify by simulation.`);
  if (rec) {
    rec.input("W", w, "length", "gm/ID sizing");
    rec.note("Bias point", `|VGS| = ${r.vgs.toFixed(5)} V, V_th = ${r.p.vth.toFixed(4)} V, V_Dsat = ${r.p.vdsat.toFixed(4)} V; drawn W = ${wDrawn} m${m > 1 ? ` for each of m = ${m} devices in parallel (total ${m * wDrawn} m)` : ""}.`);
    rec.check("|VDS| above VDsat (saturation in the simulator's terms)", vds, "voltage", { min: r.p.vdsat }, "VDsat from the table");
  }
  return {
    polarity: table.polarity,
    model: table.model,
    tableFingerprint: table.fingerprint,
    l,
    w,
    multiplier: m,
    wDrawn,
    id,
    gmId,
    vgs: r.vgs,
    vds,
    vsb,
    vth: r.p.vth,
    vdsat: r.p.vdsat,
    gm,
    gds,
    gmb: r.p.gmbw * w,
    intrinsicGain: a0,
    cggPerWidth: r.p.cggw as FaradsPerMeter,
    cgsPerWidth: r.p.cgsw as FaradsPerMeter,
    cgdPerWidth: r.p.cgdw as FaradsPerMeter,
    cgg,
    cgs: r.p.cgsw * w,
    cgd: r.p.cgdw * w,
    ft,
    squareLaw: sq,
  };
}

export interface ProcessSizingOptions {
  /** The reference-width table (from `characterize`); characterised on the default grid (cached) when not given. */
  readonly table?: DeviceTable;
  /** Cache folder for the tables characterised here (as `characterize`); `false` disables it. */
  readonly cache?: CharacterizeOptions["cache"];
  readonly corner?: string;
  /** Below this W per device a table at the device's own width is used; default half the reference table's W. */
  readonly narrowWidth?: number;
  readonly rec?: Derivation;
}

/**
 * gm/ID sizing with the table matched to the device's width. Sized from the
 * reference-width table first; when each device comes out narrower than
 * `narrowWidth` (default half the table's W: ID/W does not scale there), a table
 * is characterised at that drawn width, at exactly the chosen L, |VDS| and |VSB|
 * (one short ngspice run, cached by fingerprint), and the sizing repeated until the
 * width it gives is within 3 % of the table's (at most 4 tables; ID/W moves by well
 * under 1 % over such a step). Widths above the process's widest device become
 * `multiplier` devices in parallel (`sizeByEfficiency`). The record shows the final
 * sizing and which table it used.
 */
export async function sizeByEfficiencyForProcess(process: ProcessDescription, polarity: "nmos" | "pmos", spec: EfficiencySpec, opts: ProcessSizingOptions = {}): Promise<EfficiencyDesign> {
  const ref = opts.table ?? (await characterize(process, { polarity, cache: opts.cache, corner: opts.corner }));
  if (ref.polarity !== polarity) throw new InputError(ref.polarity, `a ${polarity} table`, "sizeByEfficiencyForProcess table");
  const narrow = opts.narrowWidth ?? ref.w / 2;
  if (!(typeof narrow === "number" && narrow > 0 && Number.isFinite(narrow))) throw new InputError(narrow, "a width in m, > 0", "narrowWidth");
  let d = sizeByEfficiency(ref, spec, process);
  if (d.multiplier > 1 || d.wDrawn >= narrow) return opts.rec ? sizeByEfficiency(ref, spec, process, opts.rec) : d;
  // Same target in terms of ID, gm/ID and L from here on (the first pass resolved a budget or a gain target).
  const fixed: EfficiencySpec = { id: d.id, gmId: d.gmId, l: d.l, vds: d.vds, vsb: d.vsb, maxMultiplier: spec.maxMultiplier };
  let table = ref;
  for (let k = 0; k < 4; k++) {
    const w = d.wDrawn;
    table = await characterize(process, { polarity, w, grid: { l: [d.l], vgs: ref.grid.vgs, vds: [d.vds], vsb: [d.vsb] }, cache: opts.cache, corner: opts.corner });
    d = sizeByEfficiency(table, fixed, process);
    if (Math.abs(d.wDrawn / w - 1) < 0.03) break;
  }
  opts.rec?.note(
    "Table at the device's own width",
    `The reference table (W = ${ref.w} m, ${ref.fingerprint.slice(0, 12)}) gives W under ${narrow} m, where the current per width does not scale; the device is sized from a table characterised at W = ${table.w} m, L = ${d.l} m, |VDS| = ${d.vds} V, |VSB| = ${d.vsb} V (fingerprint ${table.fingerprint}), for I_D = ${d.id} A and gm/ID = ${d.gmId} S/A as the specification set them.`,
  );
  return opts.rec ? sizeByEfficiency(table, fixed, process, opts.rec) : d;
}

/**
 * The fewest identical parallel devices that keep each within the process's widest
 * W, or an `InfeasibleError` when more than `maxMultiplier` (default 1000) are needed:
 * at this gm/ID the device's current per width is fixed, so the current cannot be
 * carried within the supply by a sensible layout.
 */
function multiplierFor(p: ProcessDescription, t: DeviceTable, w: number, maxMultiplier: number | undefined, at: { id: number; gmId: number; l: number; jd: number; vgs: number }): number {
  const mMax = maxMultiplier ?? 1000;
  if (!(Number.isInteger(mMax) && mMax >= 1)) throw new InputError(mMax, "a whole number of parallel devices ≥ 1", "maxMultiplier");
  const wMax = p.devices[t.polarity].w.max;
  if (w <= wMax * (1 + 1e-9)) return 1;
  const m = Math.ceil(w / wMax - 1e-9);
  if (m > mMax)
    throw new InfeasibleError(
      `I_D = ${at.id} A at gm/ID = ${at.gmId} S/A needs W = ${w.toPrecision(4)} m: ${m} devices of the widest W (${wMax} m), above the ${mMax} allowed (maxMultiplier). ` +
        `At this gm/ID ${t.model} carries ${at.jd.toPrecision(4)} A per metre of width at |VGS| = ${at.vgs.toFixed(3)} V within the ${p.supply.nominal} V supply (L = ${at.l} m, table ${t.fingerprint.slice(0, 12)}); lower the current or the gm/ID, or shorten L`,
      "id",
    );
  return m;
}

/**
 * The sized device's gate capacitances per width, as a card's `tableCapacitances` block: the frequency
 * analysis then takes Cgs, Cgd and Cgb = Cgg − Cgs − Cgd from the table (interpolated at the operating point,
 * scaled by the stage's W) instead of a Level 1 estimate, and records the table's fingerprint.
 */
export function tableCapacitances(d: EfficiencyDesign, overlap?: Omit<OverlapParameters, "vgs" | "vds">): TableCapacitances {
  return {
    ...(overlap ? { overlap: { ...overlap, vgs: d.vgs as Volts, vds: d.vds as Volts } } : {}),
    cgsPerWidth: d.cgsPerWidth,
    cgdPerWidth: d.cgdPerWidth,
    cggPerWidth: d.cggPerWidth,
    table: d.tableFingerprint,
    at: `${d.model}, L = ${d.l} m, |VGS| = ${d.vgs.toFixed(4)} V, |VDS| = ${d.vds} V, |VSB| = ${d.vsb} V`,
  };
}

/** A square-law card (kp, Vt) read from the table at L: Vt is the table's threshold, kp from the current at VOV = 0.5 V. */
export function squareLawCard(table: DeviceTable, l: number, vds: number, vsb: number): { kp: number; vt: number } {
  const lk = prepared(table);
  const br = lengthBracket(lk, l);
  const pt = (li: number) => {
    const p0 = lookupAtLength(lk, li, Math.min(0.8, table.grid.vgs[table.grid.vgs.length - 1]!), vds, vsb, emptyPoint());
    const vt = p0.vth;
    const p = lookupAtLength(lk, li, Math.min(vt + 0.5, table.grid.vgs[table.grid.vgs.length - 1]!), vds, vsb, emptyPoint());
    return { vt: p.vth, kp: (2 * p.idw * table.grid.l[li]!) / 0.25 };
  };
  const a = pt(br.i);
  if (br.t === 0 || table.grid.l.length === 1) return a;
  const b = pt(br.i + 1);
  return { vt: a.vt + br.t * (b.vt - a.vt), kp: a.kp + br.t * (b.kp - a.kp) };
}

function squareLawBeside(lk: DeviceLookup, l: number, _vth: number, id: number, gmId: number, vds: number, vsb: number, w: number, vgs: number, rec?: Derivation): SquareLawDesign {
  const { kp, vt } = squareLawCard(lk.table, l, vds, vsb);
  const vov = rec ? rec.calc(gid.overdriveFromEfficiency, [gmId as SiemensPerAmpere] as const, "the same gm/ID by the square law, for comparison") : 2 / gmId;
  const wl = rec ? rec.calc(dev.aspectRatioForCurrent, [id as Amperes, kp as AmperesPerVoltSquared, vov as Volts, 0 as PerVolt, vds as Volts] as const, `square-law card fitted to the table at L: k' = ${kp.toPrecision(4)} A/V², V_t = ${vt.toFixed(4)} V (λ = 0)`) : (2 * id) / (kp * vov * vov);
  const wSq = wl * l;
  const vgsSq = vt + vov;
  let idFromTable = Number.NaN;
  try {
    const vmax = lk.table.grid.vgs[lk.table.grid.vgs.length - 1]!;
    if (vgsSq <= vmax) {
      const br = lengthBracket(lk, l);
      const pa = lookupAtLength(lk, br.i, vgsSq, vds, vsb, emptyPoint());
      const j = br.t > 0 && br.t < 1 ? mixLengths({ ...pa }, lookupAtLength(lk, br.i + 1, vgsSq, vds, vsb, emptyPoint()), br.t, lk.table.grid.l[br.i]!, lk.table.grid.l[br.i + 1]!, emptyPoint()).idw : pa.idw;
      idFromTable = j * wSq;
    }
  } catch {
    /* outside the table: left NaN and said below */
  }
  const deviation = { w: wSq / w - 1, vgs: vgsSq - vgs, id: idFromTable / id - 1 };
  rec?.note(
    "Square-law design beside it",
    `V_OV = 2/(gm/ID) = ${vov.toFixed(4)} V, W = ${wSq.toPrecision(4)} m (${(100 * deviation.w).toFixed(1)} % from the table's W), |VGS| = ${vgsSq.toFixed(4)} V (${(1000 * deviation.vgs).toFixed(1)} mV off); ` +
      (Number.isFinite(idFromTable) ? `at that W and VGS the table gives I_D = ${idFromTable.toPrecision(4)} A, ${(100 * deviation.id).toFixed(1)} % from the target.` : "that VGS lies beyond the table."),
  );
  return { kp, vt, vov, w: wSq, vgs: vgsSq, idFromTable, deviation };
}

