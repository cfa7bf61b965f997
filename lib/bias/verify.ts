/**
 * Verification of a solved operating point, independent of how it was found.
 *
 * Every solve path (the canonical single-transistor network of solve.ts and
 * solve-model.ts, the current mirror, the diode-connected load) ends here: the
 * device current is recomputed from the device's own model (square law, square
 * law with mobility degradation, EKV) at the solved node voltages and compared with
 * the current the network carries (KCL at the drain and source nodes), and the
 * node voltages are checked against the region the network allows (within the
 * rails; drain not below source, as the channel carries current drain→source
 * in device polarity).
 *
 * Tolerance, scaled to the circuit: a node voltage is known to
 * δV = 1e-12·(largest rail, gate or node magnitude, at least 1 V), so a current
 * is known to G·δV, where G bounds the conductances at the node (the device's
 * gm + gmb + gds and the resistors' 1/R; for a model other than the square law
 * twice |gm| + |gds| + |gmb| from central differences with the model layer's step). The residual must stay within
 *   tol = 1e-9·I + G·δV,   I the larger of the two currents compared.
 * Failure: ConvergenceError naming the stage, the node, both currents, the
 * residual and the tolerance. Allocation: none unless it throws.
 */
import { channelCurrent, deviceCurrent } from "../device/drain-current.js";
import { modelOf } from "../device/card.js";
import { derivativeStep } from "../device/model.js";
import { thresholdMagnitude } from "../device/threshold.js";
import { ConvergenceError } from "../errors.js";
import type { SqrtVolts, Volts } from "../quantity.js";
import type { BiasNetwork, NetworkSolution } from "./solve.js";

/** Relative part of the KCL tolerance. */
export const kclRelativeTolerance = 1e-9;
/** Voltage resolution relative to the circuit's largest voltage (at least 1 V). */
export const voltageResolution = 1e-12;

/** δV for voltages up to `scale` in magnitude. */
export const voltageTolerance = (scale: number): number => voltageResolution * Math.max(Math.abs(scale), 1);

/** The KCL tolerance for two currents a, b at a node with conductance bound g and voltage scale v. */
export const kclTolerance = (a: number, b: number, g: number, v: number): number =>
  kclRelativeTolerance * Math.max(Math.abs(a), Math.abs(b)) + g * voltageTolerance(v);

const g3 = (x: number) => String(+x.toPrecision(4));

/**
 * Check one node: |device − network| within the tolerance. Returns the
 * residual; throws ConvergenceError when it is out of tolerance or not a number.
 */
export function verifyCurrent(what: string, device: number, network: number, conductance: number, voltageScale: number, origin: string): number {
  const residual = Math.abs(device - network);
  const tol = kclTolerance(device, network, conductance, voltageScale);
  if (!(residual <= tol))
    throw new ConvergenceError(
      `the solved operating point fails KCL at ${what}: the device law gives ${g3(device)} A but the network carries ${g3(network)} A (residual ${g3(residual)} A, tolerance ${g3(tol)} A = 1e-9·I + G·δV). The values are beyond what the solver resolves in double precision; check them`,
      origin,
    );
  return residual;
}

/** Largest magnitude among the network's voltages: sets δV. */
function networkScale(n: BiasNetwork, s: NetworkSolution): number {
  return Math.max(Math.abs(n.vdr), Math.abs(n.vsr), Math.abs(n.vg), Math.abs(s.vd), Math.abs(s.vs), Math.abs(s.vg), 1);
}

/** Device current at the solved nodes, and a bound on its conductance (gm + gmb + gds) there. */
let gBound = 0;
function deviceCurrentAt(n: BiasNetwork, s: NetworkSolution): number {
  const vsb = n.bodyToRail ? s.vs - n.vsr : 0;
  const dev = n.device;
  if (dev && modelOf(dev.card) !== "square-law") {
    const vgs = s.vg - s.vs;
    const vds = s.vd - s.vs;
    const h = derivativeStep;
    const gm = deviceCurrent(dev, vgs + h, vds, vsb) - deviceCurrent(dev, vgs - h, vds, vsb);
    const gds = deviceCurrent(dev, vgs, vds + h, vsb) - deviceCurrent(dev, vgs, vds - h, vsb);
    const gmb = deviceCurrent(dev, vgs, vds, vsb - h) - deviceCurrent(dev, vgs, vds, vsb + h);
    // Twice the central-difference sum: a bound, not an estimate, against their truncation error.
    gBound = (Math.abs(gm) + Math.abs(gds) + Math.abs(gmb)) / h;
    return deviceCurrent(dev, vgs, vds, vsb);
  }
  const vt = n.bodyToRail && n.gamma !== 0 ? thresholdMagnitude(n.vt0 as Volts, n.gamma as SqrtVolts, n.phi as Volts, vsb as Volts) : n.vt0;
  const vov = s.vg - s.vs - vt;
  const vds = s.vd - s.vs;
  const i = vov > 0 && vds > 0 ? channelCurrent(n.k, vov, vds, n.lambda, n.clm) : 0;
  // Triode gm = k·VDS ≤ k·VOV and gds ≤ k·VOV; saturation gm = k·VOV; gmb ≤ gm·γ/(2√φ).
  const body = n.bodyToRail && n.gamma !== 0 ? n.gamma / (2 * Math.sqrt(n.phi)) : 0;
  gBound = n.k * Math.max(vov, 0) * (1 + n.lambda * Math.abs(vds)) * (2 + body) + n.lambda * Math.abs(i);
  return i;
}

/**
 * The residual of a network solution relative to its tolerance (≤ 1 passes;
 * NaN or Infinity fails), written to `s.kcl` and `s.kclTolerance`.
 */
export function networkResidual(n: BiasNetwork, s: NetworkSolution): number {
  const v = networkScale(n, s);
  const dv = voltageTolerance(v);
  const dev = deviceCurrentAt(n, s);
  const fed = n.iss > 0;
  // The current the network forces through the channel.
  const net = fed ? n.iss : s.id;
  let g = gBound;
  if (!fed) {
    if (n.rd > 0) g += 1 / n.rd;
    if (n.rs > 0) g += 1 / n.rs;
  }
  const tol = kclTolerance(dev, net, g, v);
  const r = Math.abs(dev - net);
  let worst = r === 0 ? 0 : r / tol;
  // Resistor KCL: the node voltages must carry the solved current through RD and RS.
  const vrd = n.vdr - s.vd - s.id * n.rd;
  const vrs = fed ? 0 : s.vs - n.vsr - s.id * n.rs;
  worst = Math.max(worst, Math.abs(vrd) / (dv + kclRelativeTolerance * Math.abs(s.id * n.rd)), Math.abs(vrs) / (dv + kclRelativeTolerance * Math.abs(s.id * n.rs)));
  // Region conditions the network imposes: no negative current, drain not below source, gate at the drain when tied.
  if (s.id < -tol || s.vd - s.vs < -dv || (n.gateToDrain && Math.abs(s.vg - s.vd) > dv)) worst = Infinity;
  if (!fed && (s.vs < n.vsr - dv || s.vd > n.vdr + dv)) worst = Infinity;
  s.kcl = Math.abs(dev - net);
  s.kclTolerance = tol;
  return worst !== worst ? Infinity : worst;
}

/** Throw ConvergenceError unless the solution passes `networkResidual`. */
export function verifyNetwork(n: BiasNetwork, s: NetworkSolution, origin: string): void {
  const r = networkResidual(n, s);
  if (r <= 1) return;
  const dev = deviceCurrentAt(n, s);
  throw new ConvergenceError(
    `the solved operating point fails its check: the device law gives ${g3(dev)} A at VG = ${g3(s.vg)} V, VS = ${g3(s.vs)} V, VD = ${g3(s.vd)} V (device polarity) but the network carries ${g3(n.iss > 0 ? n.iss : s.id)} A (KCL residual ${g3(s.kcl)} A, tolerance ${g3(s.kclTolerance)} A = 1e-9·I + G·δV${r === Infinity ? "; or the node voltages leave the rails or reverse the device" : ""}). The values are beyond what the solver resolves in double precision; check them`,
    origin,
  );
}
