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

/** A table prepared for lookups: ln(ID/W) and gm/ID per point. */
export interface DeviceLookup {
  readonly table: DeviceTable;
  readonly lnJ: Float64Array;
  readonly slope: Float64Array;
  readonly invL: Float64Array;
  /** VGS grid step (V). */
  readonly hVgs: number;
}

/** Floor below which a point is treated as carrying no current (A/m). */
const noCurrent = 1e-15;

export function deviceLookup(table: DeviceTable): DeviceLookup {
  const n = table.data.idw.length;
  const lnJ = new Float64Array(n);
  const slope = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const j = table.data.idw[i]!;
    lnJ[i] = j > noCurrent ? Math.log(j) : Number.NEGATIVE_INFINITY;
    slope[i] = j > noCurrent ? table.data.gmw[i]! / j : 0;
  }
  return { table, lnJ, slope, invL: Float64Array.from(table.grid.l, (l) => 1 / l), hVgs: table.grid.vgs.length > 1 ? table.grid.vgs[1]! - table.grid.vgs[0]! : 1 };
}

interface Axis {
  i: number;
  t: number;
}

function locate(xs: readonly number[], x: number, name: string, out: Axis): void {
  const n = xs.length;
  if (n === 1) {
    if (Math.abs(x - xs[0]!) > 1e-9) throw new InputError(x, `${name} = ${xs[0]} (the table has one point on this axis)`, `table ${name}`);
    out.i = 0;
    out.t = 0;
    return;
  }
  const x0 = xs[0]!;
  const h = (xs[n - 1]! - x0) / (n - 1);
  const u = (x - x0) / h;
  if (!(u >= -1e-9 && u <= n - 1 + 1e-9)) throw new InputError(x, `${name} from ${x0} to ${xs[n - 1]} (the table's range)`, `table ${name}`);
  let i = Math.floor(u);
  if (i > n - 2) i = n - 2;
  if (i < 0) i = 0;
  out.i = i;
  out.t = Math.min(1, Math.max(0, u - i));
}

const ag: Axis = { i: 0, t: 0 };
const ad: Axis = { i: 0, t: 0 };
const ab: Axis = { i: 0, t: 0 };

/** Along VGS at one (L, VSB, VDS) line: writes ln J (or J when `linear`) and gm/ID into `res`. */
function alongVgs(lk: DeviceLookup, base: number, res: { lnJ: number; g: number; j: number; gmw: number }): void {
  const k = base + ag.i;
  const t = ag.t;
  const y0 = lk.lnJ[k]!, y1 = lk.lnJ[k + 1]!;
  const h = lk.hVgs;
  if (y0 > Number.NEGATIVE_INFINITY && y1 > Number.NEGATIVE_INFINITY) {
    const m0 = lk.slope[k]! * h, m1 = lk.slope[k + 1]! * h;
    const t2 = t * t, t3 = t2 * t;
    const y = (2 * t3 - 3 * t2 + 1) * y0 + (t3 - 2 * t2 + t) * m0 + (-2 * t3 + 3 * t2) * y1 + (t3 - t2) * m1;
    const dy = ((6 * t2 - 6 * t) * y0 + (3 * t2 - 4 * t + 1) * m0 + (-6 * t2 + 6 * t) * y1 + (3 * t2 - 2 * t) * m1) / h;
    res.lnJ = y;
    res.g = dy;
    res.j = Math.exp(y);
    res.gmw = res.j * dy;
  } else {
    const d = lk.table.data;
    res.j = d.idw[k]! + t * (d.idw[k + 1]! - d.idw[k]!);
    res.gmw = d.gmw[k]! + t * (d.gmw[k + 1]! - d.gmw[k]!);
    res.lnJ = res.j > noCurrent ? Math.log(res.j) : Number.NEGATIVE_INFINITY;
    res.g = res.j > noCurrent ? res.gmw / res.j : 0;
  }
}

const r00 = { lnJ: 0, g: 0, j: 0, gmw: 0 };
const r01 = { lnJ: 0, g: 0, j: 0, gmw: 0 };

/** Values at one characterised length index for (VGS, VDS, VSB) already located in ag, ad, ab. */
function atLength(lk: DeviceLookup, li: number, out: PointValues): void {
  const g = lk.table.grid;
  const nG = g.vgs.length, nD = g.vds.length, nB = g.vsb.length;
  const d = lk.table.data;
  let j = 0, gmw = 0;
  const b1 = ab.i + (nB > 1 ? 1 : 0);
  const d1 = ad.i + (nD > 1 ? 1 : 0);
  for (let e = 0; e < 2; e++) {
    const kd = e === 0 ? ad.i : d1;
    const wd = e === 0 ? 1 - ad.t : ad.t;
    if (wd === 0 && e === 1) continue;
    alongVgs(lk, ((li * nB + ab.i) * nD + kd) * nG, r00);
    alongVgs(lk, ((li * nB + b1) * nD + kd) * nG, r01);
    let jd: number, gmd: number;
    if (r00.lnJ > Number.NEGATIVE_INFINITY && r01.lnJ > Number.NEGATIVE_INFINITY) {
      const lnj = r00.lnJ + ab.t * (r01.lnJ - r00.lnJ);
      jd = Math.exp(lnj);
      gmd = jd * (r00.g + ab.t * (r01.g - r00.g));
    } else {
      jd = r00.j + ab.t * (r01.j - r00.j);
      gmd = r00.gmw + ab.t * (r01.gmw - r00.gmw);
    }
    j += wd * jd;
    gmw += wd * gmd;
  }
  out.idw = j;
  out.gmId = j > noCurrent ? gmw / j : 0;
  // Trilinear for the rest.
  const tg = ag.t, td = ad.t, tb = ab.t;
  let gds = 0, gmb = 0, vth = 0, vds = 0, cgg = 0, cgs = 0, cgd = 0;
  for (let eb = 0; eb < 2; eb++) {
    const wb = eb === 0 ? 1 - tb : tb;
    if (wb === 0) continue;
    const kb = eb === 0 ? ab.i : b1;
    for (let ed = 0; ed < 2; ed++) {
      const wdd = ed === 0 ? 1 - td : td;
      if (wdd === 0) continue;
      const kd = ed === 0 ? ad.i : d1;
      const k = ((li * nB + kb) * nD + kd) * nG + ag.i;
      const w0 = wb * wdd * (1 - tg), w1 = wb * wdd * tg;
      gds += w0 * d.gdsw[k]! + w1 * d.gdsw[k + 1]!;
      gmb += w0 * d.gmbw[k]! + w1 * d.gmbw[k + 1]!;
      vth += w0 * d.vth[k]! + w1 * d.vth[k + 1]!;
      vds += w0 * d.vdsat[k]! + w1 * d.vdsat[k + 1]!;
      cgg += w0 * d.cggw[k]! + w1 * d.cggw[k + 1]!;
      cgs += w0 * d.cgsw[k]! + w1 * d.cgsw[k + 1]!;
      cgd += w0 * d.cgdw[k]! + w1 * d.cgdw[k + 1]!;
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
  locate(g.vgs, vgs, "VGS", ag);
  locate(g.vds, vds, "VDS", ad);
  locate(g.vsb, vsb, "VSB", ab);
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
  const g = lk.table.grid;
  locate(g.vgs, vgs, "VGS", ag);
  locate(g.vds, vds, "VDS", ad);
  locate(g.vsb, vsb, "VSB", ab);
  atLength(lk, li, out);
  return out;
}
