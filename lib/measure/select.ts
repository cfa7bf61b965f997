/**
 * Choosing the points of one device from a measurement set: by geometry,
 * temperature, corner and VBS, with the polarity taken from the SPICE signs
 * and checked. Values match within a relative 1e-6 (files round differently).
 * The result is what the numeric core takes: plain Float64Arrays.
 */
import { InputError } from "../errors.js";
import type { Polarity } from "../device/card.js";
import type { MeasuredSet } from "./read.js";

/** The points of one device at one temperature, SI units, SPICE signs. */
export interface Sweep {
  readonly origin: string;
  readonly polarity: Polarity;
  readonly w: number;
  readonly l: number;
  /** Kelvin. */
  readonly temp: number;
  readonly corner: string;
  readonly vgs: Float64Array;
  readonly vds: Float64Array;
  readonly vbs: Float64Array;
  readonly id: Float64Array;
  readonly line: Int32Array;
}

export interface Selection {
  readonly polarity?: Polarity;
  /** Drawn width and length in m. */
  readonly w?: number;
  readonly l?: number;
  /** Kelvin. */
  readonly temp?: number;
  readonly corner?: string;
  /** Keep only these VBS values (V, SPICE sign); all when omitted. */
  readonly vbs?: readonly number[];
  /**
   * How the file signs the drain current: "spice" (default) the current into
   * the drain (negative for a conducting PMOS); "magnitude" |ID| for both
   * polarities (as the open 180 nm PMOS data do). Magnitudes are signed here.
   */
  readonly currentSign?: "spice" | "magnitude";
}

const same = (a: number, b: number) => Math.abs(a - b) <= 1e-6 * Math.max(Math.abs(a), Math.abs(b), 1e-12);

/** Distinct values of a column, sorted. */
export function distinct(values: Float64Array): number[] {
  const out: number[] = [];
  for (const v of Array.from(values).sort((a, b) => a - b)) if (!out.length || !same(out[out.length - 1]!, v)) out.push(v);
  return out;
}

/** The geometries (W, L in m) and temperatures (K) present in a set, for listing and for fitting them all. */
export function geometries(set: MeasuredSet): { w: number; l: number; temp: number; corner: string }[] {
  const seen = new Map<string, { w: number; l: number; temp: number; corner: string }>();
  for (let i = 0; i < set.count; i++) {
    const key = `${set.w[i]!.toPrecision(6)}|${set.l[i]!.toPrecision(6)}|${set.temp[i]!.toPrecision(6)}|${set.corner[i]}`;
    if (!seen.has(key)) seen.set(key, { w: set.w[i]!, l: set.l[i]!, temp: set.temp[i]!, corner: set.corner[i]! });
  }
  return [...seen.values()];
}

/**
 * Polarity from the signs: an NMOS is measured with VGS, VDS ≥ 0, a PMOS with
 * VGS, VDS ≤ 0. A set with both signs is refused (mixed polarities).
 */
export function polarityOf(vgs: Float64Array, vds: Float64Array, origin: string, line?: Int32Array): Polarity {
  let pos = -1;
  let neg = -1;
  for (let i = 0; i < vgs.length; i++) {
    const g = vgs[i]!;
    const d = vds[i]!;
    if (g > 0 || d > 0) pos = pos < 0 ? i : pos;
    if (g < 0 || d < 0) neg = neg < 0 ? i : neg;
  }
  if (pos >= 0 && neg >= 0) {
    const where = line ? ` (positive at line ${line[pos]}, negative at line ${line[neg]})` : "";
    throw new InputError("VGS and VDS of both signs", `one polarity: VGS, VDS ≥ 0 for an NMOS or ≤ 0 for a PMOS (SPICE signs); select one device${where}`, origin);
  }
  return neg >= 0 ? "pmos" : "nmos";
}

/**
 * Current of the wrong sign beyond noise: an NMOS drain current is ≥ 0 for
 * VDS > 0 (PMOS ≤ 0). A point is refused when its current has the wrong sign
 * and exceeds both 1 nA and 1 % of the largest current in the sweep, which
 * leakage and instrument offsets (typically pA) stay far below.
 */
export function checkCurrentSigns(s: Sweep, currentSign: "spice" | "magnitude" = "spice"): void {
  const sign = s.polarity === "nmos" || currentSign === "magnitude" ? 1 : -1;
  let max = 0;
  for (let i = 0; i < s.id.length; i++) max = Math.max(max, Math.abs(s.id[i]!));
  const floor = Math.max(1e-9, 0.01 * max);
  for (let i = 0; i < s.id.length; i++) {
    if (s.vds[i]! !== 0 && sign * s.id[i]! < -floor) {
      const expected = currentSign === "magnitude" ? "a current magnitude ≥ 0" : `a drain current of the ${s.polarity} sign (${sign > 0 ? "≥ 0" : "≤ 0"}; SPICE sign: current into the drain; if the file records |ID|, read it with currentSign "magnitude")`;
      throw new InputError(s.id[i], `${expected} within noise (${floor.toExponential(2)} A)`, `${s.origin}: line ${s.line[i]}, column "id"`);
    }
  }
}

/** The points of one device. Geometry and temperature must be unique after selection (say which when not). */
export function select(set: MeasuredSet, sel: Selection = {}): Sweep {
  const keep: number[] = [];
  for (let i = 0; i < set.count; i++) {
    if (sel.w !== undefined && !same(set.w[i]!, sel.w)) continue;
    if (sel.l !== undefined && !same(set.l[i]!, sel.l)) continue;
    if (sel.temp !== undefined && Math.abs(set.temp[i]! - sel.temp) > 0.01) continue;
    if (sel.corner !== undefined && set.corner[i] !== sel.corner) continue;
    if (sel.vbs && !sel.vbs.some((v) => Math.abs(set.vbs[i]! - v) <= 1e-6 + 1e-4 * Math.abs(v))) continue;
    keep.push(i);
  }
  const asked = JSON.stringify({ ...sel, w: sel.w, l: sel.l });
  if (keep.length === 0) {
    const have = geometries(set).slice(0, 12).map((g) => `W=${fmt(g.w)} L=${fmt(g.l)} T=${(g.temp - 273.15).toFixed(0)}°C${g.corner ? ` ${g.corner}` : ""}`);
    throw new InputError(asked, `a selection that matches points; the file has ${have.join(", ")}${geometries(set).length > 12 ? ", …" : ""}`, set.origin);
  }
  const pick = (a: Float64Array) => Float64Array.from(keep, (i) => a[i]!);
  const sub = { w: pick(set.w), l: pick(set.l), temp: pick(set.temp) };
  for (const [q, unit] of [["w", "W"], ["l", "L"], ["temp", "temperature"]] as const) {
    const d = distinct(sub[q]);
    if (d.length > 1) throw new InputError(asked, `one ${unit}; the selection holds ${d.map((v) => (q === "temp" ? `${(v - 273.15).toFixed(1)} °C` : fmt(v))).join(", ")}: choose one`, set.origin);
  }
  const corners = [...new Set(keep.map((i) => set.corner[i]!))];
  if (corners.length > 1) throw new InputError(asked, `one corner; the selection holds ${corners.join(", ")}: choose one`, set.origin);
  const vgs = pick(set.vgs);
  const vds = pick(set.vds);
  const line = Int32Array.from(keep, (i) => set.line[i]!);
  const found = polarityOf(vgs, vds, set.origin, line);
  if (sel.polarity && sel.polarity !== found) throw new InputError(sel.polarity, `the polarity the signs show (${found}; SPICE signs: a PMOS has VGS, VDS ≤ 0)`, set.origin);
  const sweep: Sweep = {
    origin: set.origin, polarity: found, w: sub.w[0]!, l: sub.l[0]!, temp: sub.temp[0]!, corner: corners[0]!,
    vgs, vds, vbs: pick(set.vbs), id: pick(set.id), line,
  };
  checkCurrentSigns(sweep, sel.currentSign);
  if (sel.currentSign === "magnitude" && found === "pmos") for (let i = 0; i < sweep.id.length; i++) sweep.id[i] = -sweep.id[i]!;
  return sweep;
}

const fmt = (m: number) => `${+(m * 1e6).toPrecision(4)} µm`;
