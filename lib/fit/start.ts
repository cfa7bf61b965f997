/**
 * Starting values from the data: threshold and µCox from the transfer curve
 * with the most points at VBS = 0. At low VDS (≤ 0.2 V) the threshold is the
 * linear extrapolation at maximum transconductance, Vt = VGS − ID/gm − VDS/2,
 * µCox = gm·L/(W·VDS); at higher VDS the extrapolation of √ID to zero at its
 * maximum slope, µCox = 2·slope²·L/W (both common practice). Starting values
 * only: the fit refines them.
 */
import { InputError } from "../errors.js";
import type { Sweep } from "../measure/select.js";

export interface StartEstimate {
  /** Threshold magnitude (V). */
  readonly vt: number;
  /** µCox (A/V²). */
  readonly kp: number;
  /** The curve used. */
  readonly vds: number;
  readonly method: "linear extrapolation" | "square-root extrapolation";
}

export function estimateStart(s: Sweep): StartEstimate {
  const sign = s.polarity === "nmos" ? 1 : -1;
  const groups = new Map<string, { vds: number; pts: Map<string, [number, number]> }>();
  for (let i = 0; i < s.id.length; i++) {
    if (Math.abs(s.vbs[i]!) > 1e-6) continue;
    const vds = sign * s.vds[i]!;
    if (vds <= 0) continue;
    const key = vds.toPrecision(6);
    let g = groups.get(key);
    if (!g) groups.set(key, (g = { vds, pts: new Map() }));
    g.pts.set((sign * s.vgs[i]!).toPrecision(6), [sign * s.vgs[i]!, sign * s.id[i]!]);
  }
  const best = [...groups.values()].sort((a, b) => b.pts.size - a.pts.size || a.vds - b.vds)[0];
  if (!best || best.pts.size < 4) throw new InputError(best?.pts.size ?? 0, "a transfer curve (≥ 4 gate voltages at one VDS > 0, VBS = 0) to start the fit from", s.origin);
  const pts = [...best.pts.values()].sort((a, b) => a[0] - b[0]);
  const beta = s.w / s.l;
  const linear = best.vds <= 0.2;
  let bestSlope = 0;
  let at = 0;
  for (let i = 1; i < pts.length; i++) {
    const [g0, i0] = pts[i - 1]!;
    const [g1, i1] = pts[i]!;
    const y0 = linear ? i0 : Math.sqrt(Math.max(i0, 0));
    const y1 = linear ? i1 : Math.sqrt(Math.max(i1, 0));
    const slope = (y1 - y0) / (g1 - g0);
    if (slope > bestSlope) {
      bestSlope = slope;
      at = i;
    }
  }
  if (!(bestSlope > 0)) throw new InputError("a current that never rises with VGS", "a transfer curve whose |ID| rises with |VGS|", s.origin);
  const [g0, i0] = pts[at - 1]!;
  const [g1, i1] = pts[at]!;
  const gm = (g0 + g1) / 2;
  if (linear) {
    const id = (i0 + i1) / 2;
    return { vt: Math.max(gm - id / bestSlope - best.vds / 2, 0.05), kp: bestSlope / (beta * best.vds), vds: best.vds, method: "linear extrapolation" };
  }
  const y = (Math.sqrt(Math.max(i0, 0)) + Math.sqrt(Math.max(i1, 0))) / 2;
  return { vt: Math.max(gm - y / bestSlope, 0.05), kp: (2 * bestSlope * bestSlope) / beta, vds: best.vds, method: "square-root extrapolation" };
}
