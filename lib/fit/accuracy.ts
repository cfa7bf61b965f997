/**
 * How well a fitted model describes the measurements: relative error
 * (model − measured)/measured at every point above a current floor, summarised
 * as RMS, 95th percentile and maximum of |error|, overall and per region, and a
 * validity map: per measured curve, the error at each point and the stretches
 * where it stays within ±5 % and ±10 %.
 *
 * Regions. Inversion level from the overdrive VOV = |VGS| − Vt(VSB) through the
 * EKV charge relation of the model (lib/formulas/ekv.catalog.ts: ekvOverdriveAtCharge,
 * ekvChargeAtInversion), VOV = n·UT·(2q + ln q) with q = √(1/4 + IC) − 1/2 (Enz & Vittoz, Charge-Based MOS Transistor Modeling,
 * Wiley, 2006, from memory): weak below
 * IC = 0.1, strong above IC = 10, moderate between (the usual boundaries,
 * common practice). Saturation when VDS ≥ max(VOV, 4·UT) (common practice),
 * triode otherwise.
 */
import { ekvChargeAtInversion, ekvOverdriveAtCharge } from "../formulas/ekv.formulas.js";
import { thermalVoltage, type Kelvin, type Ratio } from "../quantity.js";
import type { Sweep } from "../measure/select.js";
import type { FitModel } from "./model.js";

export const regionNames = ["weak", "moderate", "strong", "triode", "saturation"] as const;
export type RegionName = (typeof regionNames)[number];

export interface ErrorSummary {
  readonly points: number;
  /** Relative errors as fractions (0.05 = 5 %); undefined when no point falls in the region. */
  readonly rms?: number;
  readonly p95?: number;
  readonly max?: number;
}

export interface CurveValidity {
  /** "transfer": VGS swept at fixed VDS, VBS; "output": VDS swept at fixed VGS, VBS. SPICE signs. */
  readonly kind: "transfer" | "output";
  readonly fixed: { readonly vds?: number; readonly vgs?: number; readonly vbs: number };
  readonly x: number[];
  /** Relative error per point, null below the current floor. */
  readonly error: (number | null)[];
  /** Stretches of x (inclusive ends) where |error| ≤ 5 % and ≤ 10 %. */
  readonly within5: [number, number][];
  readonly within10: [number, number][];
}

export interface Accuracy {
  readonly minCurrent: number;
  readonly overall: ErrorSummary;
  readonly regions: Record<RegionName, ErrorSummary>;
  /** Per point of the sweep: relative error (NaN below the floor; not exported, see `map`). */
  readonly error: Float64Array;
  readonly model: Float64Array;
  readonly map: CurveValidity[];
}

export function summarise(errors: ArrayLike<number>): ErrorSummary {
  const a = Float64Array.from(errors, Math.abs).sort();
  const n = a.length;
  if (n === 0) return { points: 0 };
  let s = 0;
  for (let i = 0; i < n; i++) s += a[i]! * a[i]!;
  const rank = Math.min(n - 1, Math.ceil(0.95 * n) - 1);
  return { points: n, rms: Math.sqrt(s / n), p95: a[rank]!, max: a[n - 1]! };
}

export function accuracy(model: FitModel, p: Float64Array, s: Sweep, minCurrent = 1e-8): Accuracy {
  const n = s.id.length;
  const all = Int32Array.from({ length: n }, (_, i) => i);
  const out = new Float64Array(n);
  model.evaluate(p, s, all, out);
  const err = new Float64Array(n).fill(NaN);
  const sign = s.polarity === "nmos" ? 1 : -1;
  const ut = thermalVoltage(s.temp as Kelvin);
  const nSlope = model.slope(p);
  const overdriveAt = (ic: number) => ekvOverdriveAtCharge.fn(nSlope as Ratio, ut, ekvChargeAtInversion.fn(ic as Ratio));
  const ovWeak = overdriveAt(0.1);
  const ovStrong = overdriveAt(10);
  const buckets: Record<RegionName, number[]> = { weak: [], moderate: [], strong: [], triode: [], saturation: [] };
  const used: number[] = [];
  for (let i = 0; i < n; i++) {
    if (Math.abs(s.id[i]!) < minCurrent) continue;
    const e = (out[i]! - s.id[i]!) / s.id[i]!;
    err[i] = e;
    used.push(e);
    const vov = sign * s.vgs[i]! - model.threshold(p, -sign * s.vbs[i]!);
    buckets[vov < ovWeak ? "weak" : vov < ovStrong ? "moderate" : "strong"].push(e);
    buckets[sign * s.vds[i]! >= Math.max(vov, 4 * ut) ? "saturation" : "triode"].push(e);
  }
  const regions = Object.fromEntries(regionNames.map((r) => [r, summarise(buckets[r])])) as Record<RegionName, ErrorSummary>;
  return { minCurrent, overall: summarise(used), regions, error: err, model: out, map: validityMap(s, err) };
}

/** Curves: points sharing (VDS, VBS) (transfer) or (VGS, VBS) (output), each point in the larger of the two, ≥ 3 points. */
export function validityMap(s: Sweep, err: Float64Array): CurveValidity[] {
  const key = (a: number, b: number) => `${a.toPrecision(6)}|${b.toPrecision(6)}`;
  const transfer = new Map<string, number[]>();
  const output = new Map<string, number[]>();
  for (let i = 0; i < s.id.length; i++) {
    const t = key(s.vds[i]!, s.vbs[i]!);
    const o = key(s.vgs[i]!, s.vbs[i]!);
    (transfer.get(t) ?? transfer.set(t, []).get(t)!).push(i);
    (output.get(o) ?? output.set(o, []).get(o)!).push(i);
  }
  // Each point belongs to the larger of its two candidate curves (a transfer curve at VDS = 0.05 V
  // crosses every output curve; the six points of the output curves at one VDS are no transfer curve).
  const own = { transfer: new Map<string, number[]>(), output: new Map<string, number[]>() };
  for (let i = 0; i < s.id.length; i++) {
    const t = key(s.vds[i]!, s.vbs[i]!);
    const o = key(s.vgs[i]!, s.vbs[i]!);
    const toTransfer = transfer.get(t)!.length >= output.get(o)!.length;
    const [m, k] = toTransfer ? [own.transfer, t] : [own.output, o];
    (m.get(k) ?? m.set(k, []).get(k)!).push(i);
  }
  const curves: CurveValidity[] = [];
  const build = (kind: "transfer" | "output", idx: number[]) => {
    const xs = kind === "transfer" ? s.vgs : s.vds;
    const order = [...new Map(idx.map((i) => [xs[i]!.toPrecision(6), i])).values()].sort((a, b) => Math.abs(xs[a]!) - Math.abs(xs[b]!));
    if (order.length < 3) return;
    const x = order.map((i) => xs[i]!);
    const error = order.map((i) => (Number.isNaN(err[i]!) ? null : err[i]!));
    const i0 = order[0]!;
    curves.push({
      kind,
      fixed: kind === "transfer" ? { vds: s.vds[i0]!, vbs: s.vbs[i0]! } : { vgs: s.vgs[i0]!, vbs: s.vbs[i0]! },
      x, error, within5: stretches(x, error, 0.05), within10: stretches(x, error, 0.1),
    });
  };
  for (const idx of own.transfer.values()) build("transfer", idx);
  for (const idx of own.output.values()) build("output", idx);
  return curves;
}

function stretches(x: number[], e: (number | null)[], tol: number): [number, number][] {
  const out: [number, number][] = [];
  let start = -1;
  for (let i = 0; i <= x.length; i++) {
    const ok = i < x.length && e[i] !== null && Math.abs(e[i]!) <= tol;
    if (ok && start < 0) start = i;
    if (!ok && start >= 0) {
      out.push([x[start]!, x[i - 1]!]);
      start = -1;
    }
  }
  return out;
}
