/**
 * Operating-point numerics for single-transistor bias networks.
 *
 * Every built-in topology reduces to one canonical network in the device's own
 * polarity (PMOS voltages negated, so the drain rail is the higher one):
 *
 *   drain  —RD→ drain rail VDR          gate: fixed VG, or tied to the drain (VG = VD)
 *   source —RS→ source rail VSR, or an ideal current ISS from source to VSR
 *   body   at the source, or at VSR
 *
 * With λ = 0 and no body effect the operating point has a closed form (a
 * quadratic in VOV, or in VDS in triode, or VS directly). Otherwise one monotone
 * residual is solved on a bracket where it changes sign, by Newton's method
 * with a bisection fallback: in the drain current for resistor networks,
 * f(ID) = ID − Ichannel(ID), increasing; in the source voltage for the
 * current-fed network, Ichannel(VS) − ISS, decreasing.
 * Tolerance: a step (or bracket) below 1e-12 relative, or 1e-18 A / 1e-12 V
 * absolute; at most 200 iterations, else ConvergenceError naming the stage.
 * The solve loop allocates nothing.
 */
import { channelCurrent, type ClmMode } from "../device/drain-current.js";
import { modelOf, type Device } from "../device/card.js";
import { solveModelNetwork } from "./solve-model.js";
import { thresholdMagnitude } from "../device/threshold.js";
import { ConvergenceError, InfeasibleError } from "../errors.js";
import * as bf from "../formulas/bias.formulas.js";
import { saturationCurrent } from "../formulas/device.formulas.js";
import type { Amperes, AmperesPerVoltSquared, Ohms, SqrtVolts, Volts } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import type { SolveMethod } from "./topology.js";

/** The canonical network, plain numbers in device polarity. Mutable so a sweep can reuse one object. */
export interface BiasNetwork {
  /** k = k'·W/L. */
  k: number;
  /** |Vt0|, the zero-bias threshold magnitude. */
  vt0: number;
  gamma: number;
  phi: number;
  lambda: number;
  clm: ClmMode;
  vdr: number;
  vsr: number;
  /** Gate: a fixed voltage (`gateToDrain` false) or tied to the drain. */
  gateToDrain: boolean;
  vg: number;
  rd: number;
  /** Source resistor (ignored when `iss` > 0). */
  rs: number;
  /** Ideal source current; > 0 selects the current-fed network. */
  iss: number;
  /** Body at the source rail (true) or at the source (false). */
  bodyToRail: boolean;
  /**
   * The device, when its card names a model other than the square law: the channel
   * current then comes from that model (solve-model.ts) and k, vt0, γ, φ, λ above
   * serve only the first-cut estimate.
   */
  device?: Device;
}

/** Solution scratch, filled in place. */
export interface NetworkSolution {
  /** Channel current, ≥ 0. */
  id: number;
  vg: number;
  vs: number;
  vd: number;
  vt: number;
  vov: number;
  iterations: number;
  method: SolveMethod;
  /** Final step or bracket width in the unknown. */
  tolerance: number;
}

export const newSolution = (): NetworkSolution => ({ id: 0, vg: 0, vs: 0, vd: 0, vt: 0, vov: 0, iterations: 0, method: "direct", tolerance: 0 });

const maxIterations = 200;
const relTol = 1e-12;
const absTolCurrent = 1e-18;
const absTolVoltage = 1e-12;

/** True when the network has no body effect and no channel-length modulation, so closed forms apply. */
export function hasClosedForm(n: BiasNetwork): boolean {
  if (n.device && modelOf(n.device.card) !== "square-law") return false;
  const bodyFree = n.gamma === 0 || !n.bodyToRail || (n.iss <= 0 && n.rs === 0);
  return n.lambda === 0 && bodyFree;
}

/** Solve the network; fills and returns `out`. Records the reasoning when `rec` is given. */
export function solveNetwork(n: BiasNetwork, out: NetworkSolution, origin = "stage", rec?: Derivation): NetworkSolution {
  if (!(n.vdr > n.vsr)) throw new InfeasibleError(`the drain rail (${n.vdr} V in device polarity) must lie above the source rail (${n.vsr} V)`, origin);
  if (n.device && modelOf(n.device.card) !== "square-law") return solveModelNetwork(n, n.device, out, origin, rec);
  if (hasClosedForm(n)) {
    if (n.iss > 0) closedFormFed(n, out, rec);
    else closedFormResistive(n, out, rec);
    return out;
  }
  if (rec) {
    rec.note(
      "Method",
      `${n.lambda !== 0 ? "λ ≠ 0" : ""}${n.lambda !== 0 && n.gamma !== 0 && n.bodyToRail ? " and " : ""}${n.gamma !== 0 && n.bodyToRail ? "the body effect (body at the rail, VSB follows the source)" : ""}: no closed form. First a hand estimate with λ = 0 and Vt = Vt0, then the exact solution by a bracketed, safeguarded Newton iteration.`,
    );
    const est = { ...n, lambda: 0, gamma: 0 };
    const first = newSolution();
    rec.note("First cut", "λ = 0 and Vt = Vt0 (body effect neglected):");
    if (n.iss > 0) closedFormFed(est, first, rec);
    else closedFormResistive(est, first, rec);
  }
  if (n.iss > 0) newtonFed(n, out, origin);
  else newtonResistive(n, out, origin);
  rec?.note(
    "Exact solution",
    `${n.iss > 0 ? "Source voltage" : "Drain current"} solved to ${fmt(n.iss > 0 ? out.vs : out.id)} ${n.iss > 0 ? "V" : "A"} in ${out.iterations} iterations (final step ${out.tolerance.toExponential(2)} ${n.iss > 0 ? "V" : "A"}; tolerance 1e-12 relative).`,
  );
  return out;
}

const fmt = (x: number) => String(+x.toPrecision(6));

function vtAt(n: BiasNetwork, vsb: number): number {
  return n.bodyToRail ? thresholdMagnitude(n.vt0 as Volts, n.gamma as SqrtVolts, n.phi as Volts, vsb as Volts) : n.vt0;
}

/** dVt/dVSB, matching thresholdMagnitude's forms. */
function dVtdVsb(n: BiasNetwork, vsb: number): number {
  if (!n.bodyToRail || n.gamma === 0) return 0;
  if (vsb > 0) return n.gamma / (2 * Math.sqrt(n.phi + vsb));
  const sq = Math.sqrt(n.phi);
  return sq + vsb / (2 * sq) > 0 ? n.gamma / (2 * sq) : 0;
}

// Derivatives of the channel current, written on the scratch to avoid allocation.
let dGm = 0;
let dGds = 0;
function channel(n: BiasNetwork, vov: number, vds: number): number {
  if (vov <= 0 || vds <= 0) {
    dGm = 0;
    dGds = 0;
    return vov <= 0 ? 0 : channelCurrent(n.k, vov, vds, n.lambda, n.clm);
  }
  const m = 1 + n.lambda * vds;
  if (vds < vov) {
    const cont = n.clm === "continuous";
    const base = n.k * (vov - vds / 2) * vds;
    dGm = n.k * vds * (cont ? m : 1);
    dGds = n.k * (vov - vds) * (cont ? m : 1) + (cont ? n.lambda * base : 0);
    return cont ? base * m : base;
  }
  dGm = n.k * vov * m;
  dGds = (n.k / 2) * vov * vov * n.lambda;
  return (n.k / 2) * vov * vov * m;
}

function newtonResistive(n: BiasNetwork, out: NetworkSolution, origin: string): void {
  const rt = n.rd + n.rs;
  const span = n.vdr - n.vsr;
  if (rt === 0) {
    // No resistance: terminal voltages are fixed by the rails.
    const vg = n.gateToDrain ? n.vdr : n.vg;
    const vt = vtAt(n, 0);
    fill(out, channel(n, vg - n.vsr - vt, span), vg, n.vsr, n.vdr, vt, "direct", 0, 0);
    return;
  }
  let lo = 0;
  let hi = span / rt;
  // f(0) = −Ich(0): if nothing flows at ID = 0 the device is off.
  const i0 = residualResistive(n, 0);
  if (i0 >= 0) {
    fill(out, 0, n.gateToDrain ? n.vdr : n.vg, n.vsr, n.vdr, vtAt(n, 0), "bracketed-newton", 1, 0);
    return;
  }
  let x = startResistive(n, hi);
  const fb = n.gateToDrain;
  const rail = n.bodyToRail && n.gamma !== 0;
  const sqPhi = Math.sqrt(n.phi);
  for (let it = 1; it <= maxIterations; it++) {
    // Residual f(ID) = ID − Ich(ID) and its slope, inline (the hot loop).
    const vs = n.vsr + x * n.rs;
    const vd = n.vdr - x * n.rd;
    const vg = fb ? vd : n.vg;
    let vt = n.vt0;
    let dvt = 0; // dVt/dID
    if (rail && x > 0) {
      const vsb = x * n.rs;
      const sq = Math.sqrt(n.phi + vsb);
      vt = n.vt0 + n.gamma * (sq - sqPhi);
      dvt = (n.gamma / (2 * sq)) * n.rs;
    }
    const f = x - channel(n, vg - vs - vt, vd - vs);
    if (f !== f) throw new ConvergenceError(`the residual is not a number at ID = ${x} A (check the network values)`, origin);
    if (f === 0) {
      finishResistive(n, out, x, it, 0);
      return;
    }
    if (f > 0) hi = x;
    else lo = x;
    const dvgs = fb ? -rt : -n.rs;
    const df = 1 - (dGm * (dvgs - dvt) - dGds * rt);
    let next = x - f / df;
    const tol = relTol * x + absTolCurrent;
    // A Newton step this small has converged (it may land on the bracket end it came from).
    if (Math.abs(next - x) <= tol && next >= lo && next <= hi) {
      finishResistive(n, out, next, it, Math.abs(next - x));
      return;
    }
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    x = next;
    if (hi - lo <= tol) {
      finishResistive(n, out, x, it, hi - lo);
      return;
    }
  }
  throw new ConvergenceError(`operating point did not converge in ${maxIterations} iterations (bracket ${lo}…${hi} A)`, origin);
}

/** f(ID) = ID − Ich(ID); leaves dGm/dGds at ID. */
function residualResistive(n: BiasNetwork, x: number): number {
  const vs = n.vsr + x * n.rs;
  const vd = n.vdr - x * n.rd;
  const vg = n.gateToDrain ? vd : n.vg;
  const vt = vtAt(n, vs - n.vsr);
  return x - channel(n, vg - vs - vt, vd - vs);
}

/** Start from the λ = 0, Vt = Vt0 saturation estimate, kept inside the bracket. */
function startResistive(n: BiasNetwork, hi: number): number {
  const r = n.gateToDrain ? n.rd + n.rs : n.rs;
  const vgr = (n.gateToDrain ? n.vdr : n.vg) - n.vsr;
  let vov0 = vgr - n.vt0;
  let x = vov0 > 0 ? (n.k / 2) * ((2 * vov0) / (1 + Math.sqrt(1 + 2 * n.k * r * vov0))) ** 2 : 0;
  if (n.bodyToRail && n.gamma !== 0 && x > 0) {
    // One pass with the threshold at the estimated VSB brings the start closer.
    vov0 = vgr - (n.vt0 + n.gamma * (Math.sqrt(n.phi + x * n.rs) - Math.sqrt(n.phi)));
    x = vov0 > 0 ? (n.k / 2) * ((2 * vov0) / (1 + Math.sqrt(1 + 2 * n.k * r * vov0))) ** 2 : 0;
  }
  const rt = n.rd + n.rs;
  const span = n.vdr - n.vsr;
  const vov = vov0 - (n.gateToDrain ? rt : n.rs) * x;
  if (!n.gateToDrain && x > 0 && span - x * rt < vov) {
    // The saturation estimate lands in triode: start from the λ = 0 triode root instead.
    const a = (n.k * (n.rs - n.rd)) / 2;
    const b = 1 + n.k * (rt * vov0 - n.rs * span);
    const disc = b * b + 4 * a * span;
    if (disc >= 0) {
      const d = (2 * span) / (b + Math.sqrt(disc));
      if (d > 0 && d < span) x = (span - d) / rt;
    }
  }
  return x > 0 && x < hi ? x : 0.5 * hi;
}

function finishResistive(n: BiasNetwork, out: NetworkSolution, x: number, it: number, step: number): void {
  const vs = n.vsr + x * n.rs;
  const vd = n.vdr - x * n.rd;
  const vg = n.gateToDrain ? vd : n.vg;
  const vt = vtAt(n, vs - n.vsr);
  fill(out, x, vg, vs, vd, vt, "bracketed-newton", it, step);
}

function newtonFed(n: BiasNetwork, out: NetworkSolution, origin: string): void {
  const vd = n.vdr - n.iss * n.rd;
  // At VS = VD the channel carries nothing, so the residual Ich − ISS < 0 there.
  let hi = vd;
  let lo = vd - 1;
  let width = 1;
  let it = 0;
  while (residualFed(n, lo, vd) <= 0) {
    hi = lo;
    width *= 2;
    lo = vd - width;
    if (++it > 80) throw new ConvergenceError(`no source voltage carries ISS = ${n.iss} A (searched down to ${lo} V)`, origin);
  }
  let x = 0.5 * (lo + hi);
  for (let k = 1; k <= maxIterations; k++) {
    const g = residualFed(n, x, vd);
    if (g !== g) throw new ConvergenceError(`the residual is not a number at VS = ${x} V (check the network values)`, origin);
    if (g === 0) {
      finishFed(n, out, x, vd, k, 0);
      return;
    }
    if (g > 0) lo = x;
    else hi = x;
    const dvt = dVtdVsb(n, x - n.vsr);
    const dg = -dGm * (1 + dvt) - dGds;
    let next = dg < 0 ? x - g / dg : 0.5 * (lo + hi);
    const tol = relTol * Math.max(Math.abs(x), Math.abs(vd - x)) + absTolVoltage;
    if (Math.abs(next - x) <= tol && next >= lo && next <= hi) {
      finishFed(n, out, next, vd, k, Math.abs(next - x));
      return;
    }
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    x = next;
    if (hi - lo <= tol) {
      finishFed(n, out, x, vd, k, hi - lo);
      return;
    }
  }
  throw new ConvergenceError(`source voltage did not converge in ${maxIterations} iterations (bracket ${lo}…${hi} V)`, origin);
}

function residualFed(n: BiasNetwork, vs: number, vd: number): number {
  const vt = vtAt(n, vs - n.vsr);
  return channel(n, n.vg - vs - vt, vd - vs) - n.iss;
}

function finishFed(n: BiasNetwork, out: NetworkSolution, vs: number, vd: number, it: number, step: number): void {
  fill(out, n.iss, n.vg, vs, vd, vtAt(n, vs - n.vsr), "bracketed-newton", it, step);
}

function fill(out: NetworkSolution, id: number, vg: number, vs: number, vd: number, vt: number, method: SolveMethod, it: number, tol: number): void {
  out.id = id;
  out.vg = vg;
  out.vs = vs;
  out.vd = vd;
  out.vt = vt;
  out.vov = vg - vs - vt;
  out.method = method;
  out.iterations = it;
  out.tolerance = tol;
}

// ---------------------------------------------------------------------------
// Closed forms (λ = 0, no body effect), recorded as an engineer would write them.

function closedFormResistive(n: BiasNetwork, out: NetworkSolution, rec?: Derivation): void {
  const k = n.k as AmperesPerVoltSquared;
  const vt = n.vt0 as Volts;
  const vdr = n.vdr as Volts;
  const vsr = n.vsr as Volts;
  const rd = n.rd as Ohms;
  const rs = n.rs as Ohms;
  const fb = n.gateToDrain;
  const vov0 = fb ? bf.feedbackRailOverdrive.fn(vdr, vsr, vt) : bf.railOverdrive.fn(n.vg as Volts, vsr, vt);
  if (rec) {
    if (fb) rec.step(bf.feedbackRailOverdrive, [vdr, vsr, vt], vov0, "with ID = 0 the gate sits at the drain rail");
    else rec.step(bf.railOverdrive, [n.vg, vsr, vt], vov0, "with ID = 0 the source sits at its rail");
  }
  if (vov0 <= 0) {
    rec?.note("Region: cutoff", `VOV0 = ${fmt(vov0)} V ≤ 0: even with no drop across the source side the gate cannot reach the threshold, so ID = 0 and the device is in cutoff.`);
    fill(out, 0, fb ? vdr : n.vg, vsr, vdr, vt, "closed-form", 0, 0);
    return;
  }
  if (n.rd + n.rs === 0) {
    // No resistance anywhere: the rails fix VGS and VDS, so the device law gives ID directly.
    const vg = fb ? vdr : n.vg;
    const id = channel(n, vov0, vdr - vsr);
    rec?.note("No resistors", `RD = RS = 0: VGS and VDS are set by the rails (VDS = ${fmt(vdr - vsr)} V), so ID follows from the device law directly.`);
    fill(out, id, vg, vsr, vdr, vt, "direct", 0, 0);
    return;
  }
  rec?.note("Assume saturation", fb ? "With the gate tied to the drain, VDS = VGS > VOV: the device is always in saturation when on." : "Assume saturation, ID = (k/2)·VOV², and check VDS ≥ VOV afterwards.");
  const r = fb ? rd + rs : rs;
  let vov: number;
  if (r === 0) {
    vov = vov0;
    rec?.note("Overdrive", `No resistance in the gate-source loop: VOV = VOV0 = ${fmt(vov)} V.`);
  } else if (fb) {
    vov = bf.feedbackOverdrive.fn(vov0, k, rd, rs);
    rec?.step(bf.feedbackOverdrive, [vov0, k, rd, rs], vov, "VGS = VDR − ID·(RD+RS) − VSR with ID = (k/2)·VOV²");
    if (rec) {
      const r2 = bf.feedbackOverdriveRejected.fn(k, rd, rs, vov0);
      rec.step(bf.feedbackOverdriveRejected, [k, rd, rs, vov0], r2);
      rec.note("Root rejected", `VOV' = ${fmt(r2)} V < 0 means VGS < Vt, where the square law does not apply: rejected. VOV = ${fmt(vov)} V.`);
    }
  } else {
    vov = bf.degeneratedOverdrive.fn(vov0, k, rs);
    rec?.step(bf.degeneratedOverdrive, [vov0, k, rs], vov, "VGS = VG − VSR − ID·RS with ID = (k/2)·VOV²");
    if (rec) {
      const r2 = bf.degeneratedOverdriveRejected.fn(k, rs, vov0);
      rec.step(bf.degeneratedOverdriveRejected, [k, rs, vov0], r2);
      rec.note("Root rejected", `VOV' = ${fmt(r2)} V < 0 means VGS < Vt, where the square law does not apply: rejected. VOV = ${fmt(vov)} V.`);
    }
  }
  const id = saturationCurrent.fn(k, vov as Volts);
  rec?.step(saturationCurrent, [k, vov], id, "λ = 0");
  const vs = bf.sourceNode.fn(vsr, id, rs);
  const vd = bf.drainNode.fn(vdr, id, rd);
  const vds = bf.drainSourceVoltage.fn(vd, vs);
  if (rec) {
    rec.step(bf.sourceNode, [vsr, id, rs], vs);
    rec.step(bf.drainNode, [vdr, id, rd], vd);
    rec.step(bf.drainSourceVoltage, [vd, vs], vds);
  }
  if (vds >= vov) {
    if (rec) {
      const m = bf.saturationMargin.fn(vds, vov as Volts);
      rec.step(bf.saturationMargin, [vds, vov], m, "check the saturation assumption");
      rec.note("Assumption holds", `VDS = ${fmt(vds)} V ≥ VOV = ${fmt(vov)} V: saturation confirmed (margin ${fmt(m)} V).`);
    }
    fill(out, id, fb ? vd : n.vg, vs, vd, vt, "closed-form", 0, 0);
    return;
  }
  rec?.note("Assumption fails", `VDS = ${fmt(vds)} V < VOV = ${fmt(vov)} V: the device cannot be in saturation. Re-solve in triode, ID = k·(VOV − VDS/2)·VDS, with VOV = VOV0 − ID·RS and ID = (VDR − VSR − VDS)/(RD + RS).`);
  const span = bf.railSpan.fn(vdr, vsr);
  const a = bf.triodeQuadA.fn(k, rs, rd);
  const b = bf.triodeQuadB.fn(k, rd, rs, vov0, span);
  const d1 = bf.triodeDrainSource.fn(span, b, a);
  const d2 = a !== 0 ? bf.triodeDrainSourceRejected.fn(span, b, a) : Infinity;
  // The physical root has 0 ≤ VDS ≤ VDR − VSR and VDS < VOV (the triode law's own range).
  const rt = rd + rs;
  const inTriode = (d: number) => d >= 0 && d <= span && d < vov0 - (rs * (span - d)) / rt;
  const ok1 = inTriode(d1);
  const ok2 = !ok1 && inTriode(d2);
  if (!ok1 && !ok2) throw new ConvergenceError(`triode quadratic has no root in 0…${span} V (roots ${d1}, ${d2})`, "closed form");
  const vdsT = (ok1 ? d1 : d2) as Volts;
  if (rec) {
    rec.step(bf.railSpan, [vdr, vsr], span);
    rec.step(bf.triodeQuadA, [k, rs, rd], a);
    rec.step(bf.triodeQuadB, [k, rd, rs, vov0, span], b);
    rec.step(bf.triodeDrainSource, [span, b, a], d1);
    if (a !== 0) rec.step(bf.triodeDrainSourceRejected, [span, b, a], d2);
    else rec.note("Linear equation", "RD = RS, so the quadratic term vanishes and the equation has one root.");
    const rej = ok1 ? d2 : d1;
    if (a !== 0) rec.note("Root rejected", `VDS' = ${fmt(rej)} V lies outside 0…${fmt(span)} V (the rail span) or beyond VOV, where the triode law does not apply: rejected. VDS = ${fmt(vdsT)} V.`);
  }
  const idT = bf.currentFromDrainSource.fn(span, vdsT, rd, rs);
  const vsT = bf.sourceNode.fn(vsr, idT, rs);
  const vdT = bf.drainNode.fn(vdr, idT, rd);
  if (rec) {
    rec.step(bf.currentFromDrainSource, [span, vdsT, rd, rs], idT);
    rec.step(bf.sourceNode, [vsr, idT, rs], vsT);
    rec.step(bf.drainNode, [vdr, idT, rd], vdT);
    const vovT = n.vg - vsT - vt;
    rec.note("Triode confirmed", `VOV = ${fmt(vovT)} V > 0 and VDS = ${fmt(vdsT)} V < VOV: triode is consistent.`);
  }
  fill(out, idT, n.vg, vsT, vdT, vt, "closed-form", 0, 0);
}

function closedFormFed(n: BiasNetwork, out: NetworkSolution, rec?: Derivation): void {
  const k = n.k as AmperesPerVoltSquared;
  const vt = n.vt0 as Volts;
  const iss = n.iss as Amperes;
  const vg = n.vg as Volts;
  const vd = bf.drainNodeSink.fn(n.vdr as Volts, iss, n.rd as Ohms);
  rec?.step(bf.drainNodeSink, [n.vdr, iss, n.rd], vd, "the whole bias current flows in RD");
  rec?.note("Assume saturation", "The source sits wherever the channel carries ISS. Assume saturation and check VDS ≥ VOV.");
  const vov = bf.sinkOverdrive.fn(iss, k);
  const vs = bf.sourceBelowGate.fn(vg, vt, vov);
  const vds = bf.drainSourceVoltage.fn(vd, vs);
  if (rec) {
    rec.step(bf.sinkOverdrive, [iss, k], vov);
    rec.note("Root rejected", `VOV = −${fmt(vov)} V also solves (k/2)·VOV² = ISS but means VGS < Vt: rejected.`);
    rec.step(bf.sourceBelowGate, [vg, vt, vov], vs);
    rec.step(bf.drainSourceVoltage, [vd, vs], vds);
    // Check the saturation current reproduces ISS (a consistency step the reviewer can see).
    rec.step(saturationCurrent, [k, vov], saturationCurrent.fn(k, vov));
  }
  if (vds >= vov) {
    if (rec) {
      const m = bf.saturationMargin.fn(vds, vov);
      rec.step(bf.saturationMargin, [vds, vov], m, "check the saturation assumption");
      rec.note("Assumption holds", `VDS = ${fmt(vds)} V ≥ VOV = ${fmt(vov)} V: saturation confirmed.`);
    }
    fill(out, iss, vg, vs, vd, vt, "closed-form", 0, 0);
    return;
  }
  rec?.note("Assumption fails", `VDS = ${fmt(vds)} V < VOV = ${fmt(vov)} V: re-solve in triode with VGS = VGD + VDS.`);
  const vovd = bf.drainOverdrive.fn(vg, vd, vt);
  const vdsT = bf.sinkTriodeDrainSource.fn(iss, k, vovd);
  const vsT = bf.sourceFromDrain.fn(vd, vdsT);
  if (rec) {
    rec.step(bf.drainOverdrive, [vg, vd, vt], vovd);
    rec.step(bf.sinkTriodeDrainSource, [iss, k, vovd], vdsT);
    const r2 = bf.sinkTriodeDrainSourceRejected.fn(k, vovd, iss);
    rec.step(bf.sinkTriodeDrainSourceRejected, [k, vovd, iss], r2);
    rec.note("Root rejected", `VDS' = ${fmt(r2)} V < 0 would reverse the device: rejected. VDS = ${fmt(vdsT)} V.`);
    rec.step(bf.sourceFromDrain, [vd, vdsT], vsT);
  }
  fill(out, iss, vg, vsT, vd, vt, "closed-form", 0, 0);
}
