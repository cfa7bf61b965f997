/**
 * Effective channel length and width from a set of geometries, by the
 * channel-resistance method (Terada & Muta, Jpn. J. Appl. Phys. 18(5),
 * 953–959, 1979; Chern et al., IEEE Electron Device Lett. 1(9), 170–173, 1980).
 *
 * In the linear region (the transfer curves at the lowest |VDS|, VBS = 0) the
 * measured resistance of a device of drawn length Lm is
 *   Rm = VDS/ID = Rsd + (Lm − ΔL) / (W·µCox·(VGS − Vt)),
 * a straight line in Lm for each gate voltage. The lines of several gate
 * voltages cross at Lm = ΔL, Rm = Rsd; the crossing is the least-squares point
 * nearest all lines. For the width, at fixed drawn length the conductance
 * G = c·(Wm − ΔW) is a line in Wm whose zero is ΔW, averaged over the
 * gate voltages; the series resistance Rsd (from the length method) is taken
 * off first, G = 1/(Rm − Rsd), so the line is exact. Gate voltages: strong
 * inversion, up to 8 measured |VGS| from max(|Vt| + 1 V, 1.5 V) up (common practice: well above threshold, where the
 * method's assumption of a gate-independent ΔL holds best).
 */
import { InputError } from "../errors.js";
import type { MeasuredSet } from "../measure/read.js";
import { select, type Selection } from "../measure/select.js";
import { fitLine } from "../device/extract.js";

export interface LengthReduction {
  /** ΔL = Lm − Leff (m). */
  readonly deltaL: number;
  /** Source plus drain series resistance at the crossing (Ω). */
  readonly rsd: number;
  /** The gate voltages used (device polarity, V) and the lengths (m). */
  readonly vgs: readonly number[];
  readonly lengths: readonly number[];
  /** Spread of the pairwise crossings (m): how well the lines meet at one point. */
  readonly spread: number;
}

export interface WidthReduction {
  /** ΔW = Wm − Weff (m). */
  readonly deltaW: number;
  readonly vgs: readonly number[];
  readonly widths: readonly number[];
  readonly spread: number;
}

/** Linear-region resistance at each gate voltage of `gates` for one device (device-polarity magnitudes). */
function linearPoints(set: MeasuredSet, sel: Selection, gates: readonly number[]): number[] {
  const s = select(set, { ...sel, vbs: [0] });
  const sign = s.polarity === "nmos" ? 1 : -1;
  let vdsMin = Infinity;
  for (let i = 0; i < s.id.length; i++) if (sign * s.vds[i]! > 0) vdsMin = Math.min(vdsMin, sign * s.vds[i]!);
  if (!(vdsMin <= 0.2)) throw new InputError(vdsMin, "a transfer curve at |VDS| ≤ 0.2 V (linear region) for the channel-resistance method", s.origin);
  return gates.map((g) => {
    for (let i = 0; i < s.id.length; i++)
      if (Math.abs(sign * s.vds[i]! - vdsMin) < 1e-9 && Math.abs(sign * s.vgs[i]! - g) < 1e-6) return (sign * s.vds[i]!) / (sign * s.id[i]!);
    throw new InputError(g, `a measured point at |VGS| = ${g} V on the linear-region transfer curve`, `${s.origin} W=${s.w} L=${s.l}`);
  });
}

/** Up to 8 measured gate voltages (device polarity) of the linear-region curve, from max(|Vt| + 1 V, 1.5 V) up. */
function gateSet(set: MeasuredSet, sel: Selection, vtGuess: number): number[] {
  const s = select(set, { ...sel, vbs: [0] });
  const sign = s.polarity === "nmos" ? 1 : -1;
  let vdsMin = Infinity;
  for (let i = 0; i < s.id.length; i++) if (sign * s.vds[i]! > 0) vdsMin = Math.min(vdsMin, sign * s.vds[i]!);
  const lo = Math.max(Math.abs(vtGuess) + 1, 1.5);
  const g = [...new Set(Array.from(s.vgs.keys()).filter((i) => Math.abs(sign * s.vds[i]! - vdsMin) < 1e-9 && sign * s.vgs[i]! >= lo - 1e-9).map((i) => sign * s.vgs[i]!))].sort((a, b) => a - b);
  const step = Math.max(1, Math.ceil(g.length / 8));
  return g.filter((_, k) => k % step === 0);
}

/** ΔL and Rsd from devices of one width at several lengths. */
export function lengthReduction(set: MeasuredSet, w: number, lengths: readonly number[], opts: Omit<Selection, "w" | "l"> & { vgs?: readonly number[]; vt?: number } = {}): LengthReduction {
  if (lengths.length < 2) throw new InputError(lengths.length, "at least two drawn lengths for the channel-resistance method", "lengthReduction");
  const gates = opts.vgs ?? gateSet(set, { ...opts, w, l: lengths[lengths.length - 1]! }, opts.vt ?? 0.7);
  if (gates.length < 2) throw new InputError(gates, "at least two gate voltages", "lengthReduction");
  const r = lengths.map((l) => linearPoints(set, { ...opts, w, l }, gates));
  const lines = gates.map((_, k) => fitLine(lengths as number[], r.map((row) => row[k]!)));
  // Least-squares point (L, R) nearest all lines R = a + b·L: minimise Σ (a + b·L − R)².
  let sbb = 0, sb = 0, sab = 0, sa = 0;
  const n = lines.length;
  for (const { intercept: a, slope: b } of lines) {
    sbb += b * b; sb += b; sab += a * b; sa += a;
  }
  const det = n * sbb - sb * sb;
  if (!(Math.abs(det) > 0)) throw new InputError(gates, "gate voltages whose resistance lines are not parallel", "lengthReduction");
  const deltaL = (sb * sa - n * sab) / det;
  const rsd = (sa + sb * deltaL) / n;
  const crossings: number[] = [];
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) crossings.push((lines[j]!.intercept - lines[i]!.intercept) / (lines[i]!.slope - lines[j]!.slope));
  const spread = Math.max(...crossings) - Math.min(...crossings);
  return { deltaL, rsd, vgs: gates, lengths, spread };
}

/** ΔW from devices of one length at several widths. */
export function widthReduction(set: MeasuredSet, l: number, widths: readonly number[], opts: Omit<Selection, "w" | "l"> & { vgs?: readonly number[]; vt?: number; rsd?: number } = {}): WidthReduction {
  if (widths.length < 2) throw new InputError(widths.length, "at least two drawn widths", "widthReduction");
  const gates = opts.vgs ?? gateSet(set, { ...opts, w: widths[widths.length - 1]!, l }, opts.vt ?? 0.7);
  const g = widths.map((w) => linearPoints(set, { ...opts, w, l }, gates).map((r) => 1 / (r - (opts.rsd ?? 0))));
  const zeros = gates.map((_, k) => {
    const line = fitLine(widths as number[], g.map((row) => row[k]!));
    return -line.intercept / line.slope;
  });
  const deltaW = zeros.reduce((a, b) => a + b, 0) / zeros.length;
  return { deltaW, vgs: gates, widths, spread: Math.max(...zeros) - Math.min(...zeros) };
}
