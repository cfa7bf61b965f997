/**
 * Interpolation in a characterisation table (`characterize.ts`).
 *
 * Method: along VGS, ln(ID/W) by cubic Hermite with its exact slopes gm/ID from the
 * simulator (so the current is exact in weak inversion, where it is exponential,
 * and gm/ID is the derivative of the interpolated current); across VSB ln(ID/W) and
 * gm/ID linearly (ID changes geometrically with the threshold shift); across VDS
 * ID/W and gm/W linearly. Other figures are trilinear. Between characterised
 * lengths the coordinate is 1/L (a binned BSIM model's parameters are linear in
 * 1/L inside a bin): see `mixLengths`. Points that carry no current
 * (VDS = 0) fall back to linear interpolation of ID/W and gm/W.
 * Tolerance: at the table's grid points the values are the simulator's; between
 * them see the accuracy figures in the README. Outside the grid: `InputError`
 * naming the axis and its range. Allocation: `lookupInto` writes into a caller's
 * `PointValues` and allocates nothing.
 */
import { InputError } from "../errors.js";
import type { DeviceTable } from "./characterize.js";

export interface PointValues {
  /** ID/W (A/m), gm/ID (S/A), gds/W, gmb/W (S/m), Vth, VDsat (V), Cgg/W, Cgs/W, Cgd/W (F/m). */
  idw: number;
  gmId: number;
  gdsw: number;
  gmbw: number;
  vth: number;
  vdsat: number;
  cggw: number;
  cgsw: number;
  cgdw: number;
}

export const emptyPoint = (): PointValues => ({ idw: 0, gmId: 0, gdsw: 0, gmbw: 0, vth: 0, vdsat: 0, cggw: 0, cgsw: 0, cgdw: 0 });

/** A table prepared for lookups: ln(ID/W) and gm/ID per point, grid steps, and the trilinear figures side by side. */
export interface DeviceLookup {
  readonly table: DeviceTable;
  readonly lnJ: Float64Array;
  readonly slope: Float64Array;
  readonly invL: Float64Array;
  /** VGS grid step (V), the Hermite scale. */
  readonly hVgs: number;
  /** Points per axis and each even axis's first value and step (step 0 on a one-point axis). */
  readonly nG: number;
  readonly nD: number;
  readonly nB: number;
  readonly g0: number;
  readonly gh: number;
  readonly d0: number;
  readonly dh: number;
  readonly b0: number;
  readonly bh: number;
  /** Per point, gds/W, gmb/W, Vth, VDsat, Cgg/W, Cgs/W, Cgd/W side by side (stride 7), so the trilinear pass reads adjacent memory. */
  readonly rest: Float64Array;
}

/** Floor below which a point is treated as carrying no current (A/m). */
const noCurrent = 1e-15;
const restOrder = ["gdsw", "gmbw", "vth", "vdsat", "cggw", "cgsw", "cgdw"] as const;
const stride = restOrder.length;

const step = (xs: readonly number[]): number => (xs.length > 1 ? (xs[xs.length - 1]! - xs[0]!) / (xs.length - 1) : 0);

export function deviceLookup(table: DeviceTable): DeviceLookup {
  const d = table.data;
  const n = d.idw.length;
  const lnJ = new Float64Array(n);
  const slope = new Float64Array(n);
  const rest = new Float64Array(n * stride);
  for (let i = 0; i < n; i++) {
    const j = d.idw[i]!;
    lnJ[i] = j > noCurrent ? Math.log(j) : Number.NEGATIVE_INFINITY;
    slope[i] = j > noCurrent ? d.gmw[i]! / j : 0;
    for (let q = 0; q < stride; q++) rest[i * stride + q] = d[restOrder[q]!][i]!;
  }
  const g = table.grid;
  return {
    table,
    lnJ,
    slope,
    invL: Float64Array.from(g.l, (l) => 1 / l),
    hVgs: g.vgs.length > 1 ? g.vgs[1]! - g.vgs[0]! : 1,
    nG: g.vgs.length,
    nD: g.vds.length,
    nB: g.vsb.length,
    g0: g.vgs[0]!,
    gh: step(g.vgs),
    d0: g.vds[0]!,
    dh: step(g.vds),
    b0: g.vsb[0]!,
    bh: step(g.vsb),
    rest,
  };
}

interface Axis {
  i: number;
  t: number;
}

/** Where x falls on an even axis: returns the cell index and leaves the fraction in `cellT`. */
let cellT = 0;
function locate(xs: readonly number[], x0: number, h: number, n: number, x: number, name: string): number {
  if (n === 1) {
    if (Math.abs(x - x0) > 1e-9) throw new InputError(x, `${name} = ${x0} (the table has one point on this axis)`, `table ${name}`);
    cellT = 0;
    return 0;
  }
  const u = (x - x0) / h;
  if (!(u >= -1e-9 && u <= n - 1 + 1e-9)) throw new InputError(x, `${name} from ${x0} to ${xs[n - 1]} (the table's range)`, `table ${name}`);
  let i = Math.floor(u);
  if (i > n - 2) i = n - 2;
  if (i < 0) i = 0;
  cellT = Math.min(1, Math.max(0, u - i));
  return i;
}

// The located cell of the current lookup (module scratch: lookups are synchronous).
let gi = 0, gt = 0, di = 0, dt = 0, bi = 0, bt = 0;

/**
 * Scratch for two VGS lines, 5 slots each: ln J, gm/ID, J, gm/W, Hermite flag.
 * J and gm/W are filled only on the linear fallback; on a Hermite line they are
 * exp(ln J) and J·gm/ID, computed only when the VSB step needs them.
 */
const sc = new Float64Array(10);

/** Along VGS at one (L, VSB, VDS) line starting at point k. */
function alongVgs(lk: DeviceLookup, k: number, t: number, o: number): void {
  const lnJ = lk.lnJ;
  const y0 = lnJ[k]!, y1 = lnJ[k + 1]!;
  if (y0 > Number.NEGATIVE_INFINITY && y1 > Number.NEGATIVE_INFINITY) {
    const h = lk.hVgs;
    const m0 = lk.slope[k]! * h, m1 = lk.slope[k + 1]! * h;
    const t2 = t * t, t3 = t2 * t;
    sc[o] = (2 * t3 - 3 * t2 + 1) * y0 + (t3 - 2 * t2 + t) * m0 + (-2 * t3 + 3 * t2) * y1 + (t3 - t2) * m1;
    sc[o + 1] = ((6 * t2 - 6 * t) * y0 + (3 * t2 - 4 * t + 1) * m0 + (-6 * t2 + 6 * t) * y1 + (3 * t2 - 2 * t) * m1) / h;
    sc[o + 4] = 1;
  } else {
    const d = lk.table.data;
    const j = d.idw[k]! + t * (d.idw[k + 1]! - d.idw[k]!);
    const gmw = d.gmw[k]! + t * (d.gmw[k + 1]! - d.gmw[k]!);
    sc[o] = j > noCurrent ? Math.log(j) : Number.NEGATIVE_INFINITY;
    sc[o + 1] = j > noCurrent ? gmw / j : 0;
    sc[o + 2] = j;
    sc[o + 3] = gmw;
    sc[o + 4] = 0;
  }
}

/** Values at one characterised length index for (VGS, VDS, VSB) already located. */
function atLength(lk: DeviceLookup, li: number, out: PointValues): void {
  const nG = lk.nG, nD = lk.nD, nB = lk.nB;
  let j = 0, gmw = 0;
  const b1 = bi + (nB > 1 ? 1 : 0);
  const d1 = di + (nD > 1 ? 1 : 0);
  for (let e = 0; e < 2; e++) {
    const kd = e === 0 ? di : d1;
    const wd = e === 0 ? 1 - dt : dt;
    if (wd === 0 && e === 1) continue;
    alongVgs(lk, ((li * nB + bi) * nD + kd) * nG + gi, gt, 0);
    alongVgs(lk, ((li * nB + b1) * nD + kd) * nG + gi, gt, 5);
    const y0 = sc[0]!, y1 = sc[5]!;
    let jd: number, gmd: number;
    if (y0 > Number.NEGATIVE_INFINITY && y1 > Number.NEGATIVE_INFINITY) {
      jd = Math.exp(y0 + bt * (y1 - y0));
      gmd = jd * (sc[1]! + bt * (sc[6]! - sc[1]!));
    } else {
      let ja: number, ga: number, jb: number, gb: number;
      if (sc[4] === 1) {
        ja = Math.exp(y0);
        ga = ja * sc[1]!;
      } else {
        ja = sc[2]!;
        ga = sc[3]!;
      }
      if (sc[9] === 1) {
        jb = Math.exp(y1);
        gb = jb * sc[6]!;
      } else {
        jb = sc[7]!;
        gb = sc[8]!;
      }
      jd = ja + bt * (jb - ja);
      gmd = ga + bt * (gb - ga);
    }
    j += wd * jd;
    gmw += wd * gmd;
  }
  out.idw = j;
  out.gmId = j > noCurrent ? gmw / j : 0;
  // Trilinear for the rest, from the interleaved array.
  const r = lk.rest;
  let gds = 0, gmb = 0, vth = 0, vds = 0, cgg = 0, cgs = 0, cgd = 0;
  for (let eb = 0; eb < 2; eb++) {
    const wb = eb === 0 ? 1 - bt : bt;
    if (wb === 0) continue;
    const kb = eb === 0 ? bi : b1;
    for (let ed = 0; ed < 2; ed++) {
      const wdd = ed === 0 ? 1 - dt : dt;
      if (wdd === 0) continue;
      const kd = ed === 0 ? di : d1;
      const k = (((li * nB + kb) * nD + kd) * nG + gi) * stride;
      const w0 = wb * wdd * (1 - gt), w1 = wb * wdd * gt;
      gds += w0 * r[k]! + w1 * r[k + stride]!;
      gmb += w0 * r[k + 1]! + w1 * r[k + stride + 1]!;
      vth += w0 * r[k + 2]! + w1 * r[k + stride + 2]!;
      vds += w0 * r[k + 3]! + w1 * r[k + stride + 3]!;
      cgg += w0 * r[k + 4]! + w1 * r[k + stride + 4]!;
      cgs += w0 * r[k + 5]! + w1 * r[k + stride + 5]!;
      cgd += w0 * r[k + 6]! + w1 * r[k + stride + 6]!;
    }
  }
  out.gdsw = gds;
  out.gmbw = gmb;
  out.vth = vth;
  out.vdsat = vds;
  out.cggw = cgg;
  out.cgsw = cgs;
  out.cgdw = cgd;
}

function locateAll(lk: DeviceLookup, vgs: number, vds: number, vsb: number): void {
  const g = lk.table.grid;
  gi = locate(g.vgs, lk.g0, lk.gh, lk.nG, vgs, "VGS");
  gt = cellT;
  di = locate(g.vds, lk.d0, lk.dh, lk.nD, vds, "VDS");
  dt = cellT;
  bi = locate(g.vsb, lk.b0, lk.bh, lk.nB, vsb, "VSB");
  bt = cellT;
}

/** Which characterised lengths bracket L, and where between them (in 1/L, the coordinate a binned model's parameters are linear in). */
export function lengthBracket(lk: DeviceLookup, l: number, out: Axis = { i: 0, t: 0 }): Axis {
  const ls = lk.table.grid.l;
  const n = ls.length;
  if (!(l >= ls[0]! * (1 - 1e-9) && l <= ls[n - 1]! * (1 + 1e-9))) throw new InputError(l, `L from ${ls[0]} m to ${ls[n - 1]} m (the table's characterised lengths)`, "table L");
  if (n === 1) {
    out.i = 0;
    out.t = 0;
    return out;
  }
  let i = 0;
  while (i < n - 2 && l > ls[i + 1]!) i++;
  out.i = i;
  out.t = Math.min(1, Math.max(0, (1 / l - lk.invL[i]!) / (lk.invL[i + 1]! - lk.invL[i]!)));
  return out;
}

const al: Axis = { i: 0, t: 0 };
const p0 = emptyPoint();
const p1 = emptyPoint();

/**
 * Mix two lengths' values at t (in 1/L between la and lb): currents and conductances per
 * width linearly in 1/L (exact when they scale as 1/L), capacitances per width as
 * capacitance per area (C/(W·L)) linearly in 1/L, voltages and gm/ID linearly in 1/L.
 */
export function mixLengths(a: PointValues, b: PointValues, t: number, la: number, lb: number, out: PointValues): PointValues {
  const u = 1 - t;
  const l = 1 / (u / la + t / lb);
  out.idw = u * a.idw + t * b.idw;
  out.gmId = u * a.gmId + t * b.gmId;
  out.gdsw = u * a.gdsw + t * b.gdsw;
  out.gmbw = u * a.gmbw + t * b.gmbw;
  out.vth = u * a.vth + t * b.vth;
  out.vdsat = u * a.vdsat + t * b.vdsat;
  out.cggw = l * (u * (a.cggw / la) + t * (b.cggw / lb));
  out.cgsw = l * (u * (a.cgsw / la) + t * (b.cgsw / lb));
  out.cgdw = l * (u * (a.cgdw / la) + t * (b.cgdw / lb));
  return out;
}

/** Values at (L, |VGS|, |VDS|, |VSB|) in device polarity; allocation-free. */
export function lookupInto(lk: DeviceLookup, l: number, vgs: number, vds: number, vsb: number, out: PointValues): PointValues {
  const g = lk.table.grid;
  locateAll(lk, vgs, vds, vsb);
  lengthBracket(lk, l, al);
  if (al.t === 0 || g.l.length === 1) {
    atLength(lk, al.i, out);
    return out;
  }
  atLength(lk, al.i, p0);
  if (al.t === 1) {
    atLength(lk, al.i + 1, out);
    return out;
  }
  atLength(lk, al.i + 1, p1);
  return mixLengths(p0, p1, al.t, g.l[al.i]!, g.l[al.i + 1]!, out);
}

/** Values at one characterised length index (no interpolation in L). */
export function lookupAtLength(lk: DeviceLookup, li: number, vgs: number, vds: number, vsb: number, out: PointValues): PointValues {
  locateAll(lk, vgs, vds, vsb);
  atLength(lk, li, out);
  return out;
}
