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
 * `PointValues` and allocates nothing: the Hermite cubics are precomputed per cell,
 * the located cell sits in a module typed array, indices come from the even grids'
 * first value and step (no search except over the few lengths).
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

/** A table prepared for lookups: per-cell cubics of ln(ID/W) along VGS, grid steps, and the trilinear figures side by side. */
export interface DeviceLookup {
  readonly table: DeviceTable;
  /** ln(ID/W) per point (−∞ where no current flows). */
  readonly lnJ: Float64Array;
  /** gm/ID per point (0 where no current flows). */
  readonly slope: Float64Array;
  /**
   * Per point k (the left end of a VGS cell), the cubic Hermite of ln(ID/W) on that
   * cell in t ∈ [0, 1]: c0 + t·(c1 + t·(c2 + t·c3)), stride 4; c0 is NaN when either
   * end carries no current (linear fallback).
   */
  readonly cubic: Float64Array;
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
  const hVgs = g.vgs.length > 1 ? g.vgs[1]! - g.vgs[0]! : 1;
  const cubic = new Float64Array(n * 4);
  const nG = g.vgs.length;
  for (let k = 0; k < n; k++) {
    const y0 = lnJ[k]!, y1 = k % nG < nG - 1 ? lnJ[k + 1]! : Number.NEGATIVE_INFINITY;
    if (y0 === Number.NEGATIVE_INFINITY || y1 === Number.NEGATIVE_INFINITY) {
      cubic[4 * k] = Number.NaN;
      continue;
    }
    const m0 = slope[k]! * hVgs, m1 = slope[k + 1]! * hVgs;
    cubic[4 * k] = y0;
    cubic[4 * k + 1] = m0;
    cubic[4 * k + 2] = 3 * (y1 - y0) - 2 * m0 - m1;
    cubic[4 * k + 3] = 2 * (y0 - y1) + m0 + m1;
  }
  return {
    table,
    lnJ,
    slope,
    cubic,
    invL: Float64Array.from(g.l, (l) => 1 / l),
    hVgs,
    nG,
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

/**
 * The located cell of the current lookup: VGS, VDS, VSB index and fraction in
 * slots 0–5 (a typed array, so writing a fraction allocates nothing; lookups are
 * synchronous).
 */
const at = new Float64Array(6);

/** Where x falls on an even axis: the cell index into at[slot], the fraction into at[slot + 1]. */
function locate(xs: readonly number[], x0: number, h: number, n: number, x: number, name: string, slot: number): void {
  if (n === 1) {
    if (!(Math.abs(x - x0) <= 1e-9)) throw new InputError(x, `${name} = ${x0} (the table has one point on this axis)`, `table ${name}`);
    at[slot] = 0;
    at[slot + 1] = 0;
    return;
  }
  const u = (x - x0) / h;
  if (!(u >= -1e-9 && u <= n - 1 + 1e-9)) throw new InputError(x, `${name} from ${x0} to ${xs[n - 1]} (the table's range)`, `table ${name}`);
  let i = Math.floor(u);
  if (i > n - 2) i = n - 2;
  if (i < 0) i = 0;
  const t = u - i;
  at[slot] = i;
  at[slot + 1] = t < 0 ? 0 : t > 1 ? 1 : t;
}

/**
 * Scratch for one VGS line: ln J, gm/ID, J, gm/W, Hermite flag. J and gm/W are
 * filled only on the linear fallback; on a Hermite line they are exp(ln J) and
 * J·gm/ID, computed only when the VSB step needs them.
 */
const sc = new Float64Array(10);

/** Along VGS at one (L, VSB, VDS) line starting at point k, into sc[o…o+4]. */
function alongVgs(lk: DeviceLookup, k: number, t: number, o: number): void {
  const c = lk.cubic;
  const c0 = c[4 * k]!;
  if (c0 === c0) {
    const c1 = c[4 * k + 1]!, c2 = c[4 * k + 2]!, c3 = c[4 * k + 3]!;
    sc[o] = c0 + t * (c1 + t * (c2 + t * c3));
    sc[o + 1] = (c1 + t * (2 * c2 + 3 * t * c3)) / lk.hVgs;
    sc[o + 4] = 1;
  } else {
    const d = lk.table.data;
    const k1 = t > 0 ? k + 1 : k;
    const j = d.idw[k]! + t * (d.idw[k1]! - d.idw[k]!);
    const gmw = d.gmw[k]! + t * (d.gmw[k1]! - d.gmw[k]!);
    sc[o] = j > noCurrent ? Math.log(j) : Number.NEGATIVE_INFINITY;
    sc[o + 1] = j > noCurrent ? gmw / j : 0;
    sc[o + 2] = j;
    sc[o + 3] = gmw;
    sc[o + 4] = 0;
  }
}

/** Current and gm per width at one VDS grid line, between the two VSB lines (index k, next VSB at k + bStep). */
function acrossVsb(lk: DeviceLookup, k: number, bStep: number, gt: number, bt: number, out: LineValues): void {
  alongVgs(lk, k, gt, 0);
  if (bt === 0) {
    if (sc[4] === 1) {
      out.idw = Math.exp(sc[0]!);
      out.gmw = out.idw * sc[1]!;
    } else {
      out.idw = sc[2]!;
      out.gmw = sc[3]!;
    }
    return;
  }
  alongVgs(lk, k + bStep, gt, 5);
  const y0 = sc[0]!, y1 = sc[5]!;
  if (y0 > Number.NEGATIVE_INFINITY && y1 > Number.NEGATIVE_INFINITY) {
    const j = Math.exp(y0 + bt * (y1 - y0));
    out.idw = j;
    out.gmw = j * (sc[1]! + bt * (sc[6]! - sc[1]!));
    return;
  }
  const ja = sc[4] === 1 ? Math.exp(y0) : sc[2]!;
  const ga = sc[4] === 1 ? ja * sc[1]! : sc[3]!;
  const jb = sc[9] === 1 ? Math.exp(y1) : sc[7]!;
  const gb = sc[9] === 1 ? jb * sc[6]! : sc[8]!;
  out.idw = ja + bt * (jb - ja);
  out.gmw = ga + bt * (gb - ga);
}

/** J and gm/W of one VDS line (reused, so the lookup allocates nothing). */
interface LineValues {
  idw: number;
  gmw: number;
}
const line: LineValues = { idw: 0, gmw: 0 };

/** Values at one characterised length index for (VGS, VDS, VSB) already located in `at`. */
function atLength(lk: DeviceLookup, li: number, out: PointValues): void {
  const nG = lk.nG, nD = lk.nD, nB = lk.nB;
  const gi = at[0]!, gt = at[1]!, di = at[2]!, dt = at[3]!, bi = at[4]!, bt = at[5]!;
  const bStep = nB > 1 ? nD * nG : 0;
  const dStep = nD > 1 ? nG : 0;
  const k00 = ((li * nB + bi) * nD + di) * nG + gi;
  acrossVsb(lk, k00, bStep, gt, bt, line);
  let j = line.idw, gmw = line.gmw;
  if (dt > 0) {
    acrossVsb(lk, k00 + dStep, bStep, gt, bt, line);
    j += dt * (line.idw - j);
    gmw += dt * (line.gmw - gmw);
  }
  out.idw = j;
  out.gmId = j > noCurrent ? gmw / j : 0;
  // Trilinear for the rest, from the interleaved array: corners (VDS, VSB) at k00, +dStep, +bStep, +both, each a VGS pair.
  const r = lk.rest;
  const w00 = (1 - dt) * (1 - bt), w10 = dt * (1 - bt), w01 = (1 - dt) * bt, w11 = dt * bt;
  const a = k00 * stride, b = (k00 + dStep) * stride, c = (k00 + bStep) * stride, e = (k00 + dStep + bStep) * stride;
  const u = 1 - gt;
  const gs = lk.nG > 1 ? stride : 0;
  // Per corner, the VGS pair's weights; unrolled over the seven figures.
  const a0 = w00 * u, a1 = w00 * gt, b0 = w10 * u, b1 = w10 * gt, c0 = w01 * u, c1 = w01 * gt, e0 = w11 * u, e1 = w11 * gt;
  const ag = a + gs, bg = b + gs, cg = c + gs, eg = e + gs;
  out.gdsw = a0 * r[a]! + a1 * r[ag]! + b0 * r[b]! + b1 * r[bg]! + c0 * r[c]! + c1 * r[cg]! + e0 * r[e]! + e1 * r[eg]!;
  out.gmbw = a0 * r[a + 1]! + a1 * r[ag + 1]! + b0 * r[b + 1]! + b1 * r[bg + 1]! + c0 * r[c + 1]! + c1 * r[cg + 1]! + e0 * r[e + 1]! + e1 * r[eg + 1]!;
  out.vth = a0 * r[a + 2]! + a1 * r[ag + 2]! + b0 * r[b + 2]! + b1 * r[bg + 2]! + c0 * r[c + 2]! + c1 * r[cg + 2]! + e0 * r[e + 2]! + e1 * r[eg + 2]!;
  out.vdsat = a0 * r[a + 3]! + a1 * r[ag + 3]! + b0 * r[b + 3]! + b1 * r[bg + 3]! + c0 * r[c + 3]! + c1 * r[cg + 3]! + e0 * r[e + 3]! + e1 * r[eg + 3]!;
  out.cggw = a0 * r[a + 4]! + a1 * r[ag + 4]! + b0 * r[b + 4]! + b1 * r[bg + 4]! + c0 * r[c + 4]! + c1 * r[cg + 4]! + e0 * r[e + 4]! + e1 * r[eg + 4]!;
  out.cgsw = a0 * r[a + 5]! + a1 * r[ag + 5]! + b0 * r[b + 5]! + b1 * r[bg + 5]! + c0 * r[c + 5]! + c1 * r[cg + 5]! + e0 * r[e + 5]! + e1 * r[eg + 5]!;
  out.cgdw = a0 * r[a + 6]! + a1 * r[ag + 6]! + b0 * r[b + 6]! + b1 * r[bg + 6]! + c0 * r[c + 6]! + c1 * r[cg + 6]! + e0 * r[e + 6]! + e1 * r[eg + 6]!;
}

function locateAll(lk: DeviceLookup, vgs: number, vds: number, vsb: number): void {
  const g = lk.table.grid;
  locate(g.vgs, lk.g0, lk.gh, lk.nG, vgs, "VGS", 0);
  locate(g.vds, lk.d0, lk.dh, lk.nD, vds, "VDS", 2);
  locate(g.vsb, lk.b0, lk.bh, lk.nB, vsb, "VSB", 4);
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
