/**
 * Common-source stage with a diode-connected load transistor.
 *
 * The driver (`device`) has its source at its source-side rail (vss for an
 * NMOS) and its gate held at `vg`; its drain is the output. The load
 * (`devices.load`) is diode-connected between the output and the drain-side
 * rail, either
 * - the complementary type (a PMOS load on an NMOS driver): source at the rail,
 *   gate and drain at the output, no body effect; or
 * - the same type (an NMOS load on an NMOS driver): gate and drain at the rail,
 *   source at the output. With `body: "rail"` its body sits at the driver's
 *   source rail, so VSB = VOUT − VSS and the body effect raises its threshold.
 *
 * In the driver's polarity both loads are a diode of voltage VDR − VOUT; only
 * the threshold differs. The output voltage is the one unknown: the load
 * current falls and the driver current rises as it moves towards the drain
 * rail, so the difference has exactly one root, bracketed by the rails.
 *
 * Square-law cards use the closed forms where they exist. A card of another
 * model (square law with mobility degradation, EKV) gives each device's current
 * from its own model (`deviceCurrent`), with the same bracketed root (regula
 * falsi, tolerance 1e-13 of the span, ConvergenceError after 300 steps); the
 * driver's triode edge is its model's VDsat. Verified by verify.ts as every solve.
 */
import { defaultPhi, polaritySign, type Device } from "../../device/card.js";
import { channelCurrent, deviceCurrent, operatingPoint, type ClmMode } from "../../device/drain-current.js";
import { thresholdMagnitude } from "../../device/threshold.js";
import { ConvergenceError, InfeasibleError } from "../../errors.js";
import { kclTolerance, verifyCurrent } from "../verify.js";
import * as bf from "../../formulas/bias.formulas.js";
import * as df from "../../formulas/device.formulas.js";
import * as mf from "../../formulas/mirror.formulas.js";
import type { Amperes, AmperesPerVoltSquared, Ohms, Ratio, Siemens, SqrtVolts, Volts, Watts } from "../../quantity.js";
import { solverCheckPrefix, type Derivation } from "../../record/derivation.js";
import { checkComponents, checkStage, pmosConvention } from "../stage.js";
import { diffusionText, spiceNumber } from "../spice.js";
import { spicePrefix } from "../../spice/deck.js";
import type { AmplifierMetrics, ComponentField, DiodeLoadComponents, SpiceCircuit, Stage, StageAnalysis, StageCheck, SwingLimits, Topology } from "../topology.js";
import { evaluateDevice, fmt, handCaution, modelAssumption, modelled, modelLine, partChecks, recordDevice, recordFindings, requireEnhancement, secondDevice, stageCheck, stageOrigin, swingInVolts } from "./two-transistor.js";

export const diodeLoadComponents: readonly ComponentField[] = [{ name: "vg", dim: "voltage", required: true, meaning: "driver gate bias voltage (absolute, from an ideal source)" }];

export type DiodeLoadStage = Stage<"diode-load", DiodeLoadComponents>;

/** The stage in the driver's polarity, plain numbers. */
interface Pair {
  readonly s: 1 | -1;
  readonly vdr: number;
  readonly vsr: number;
  readonly vg: number;
  readonly k1: number;
  readonly vt1: number;
  readonly l1: number;
  readonly k2: number;
  readonly vt02: number;
  readonly g2: number;
  readonly phi2: number;
  readonly l2: number;
  /** Same type as the driver with its body at the rail: the load's threshold follows VOUT. */
  readonly body: boolean;
  readonly sameType: boolean;
  readonly clm: ClmMode;
  /** The driver and load when their cards name another model than the square law: their currents then come from it. */
  readonly drvModel?: Device;
  readonly loadModel?: Device;
  /** The load's body at the driver's source rail (same type, body "rail"), whatever γ. */
  readonly bodyAtRail: boolean;
}

interface Checked {
  readonly drv: Device;
  readonly load: Device;
  readonly c: DiodeLoadComponents;
  readonly o: string;
  readonly pair: Pair;
}

function checkDiodeLoad(stage: DiodeLoadStage): Checked {
  const drv = checkStage(stage as unknown as Stage);
  const o = stageOrigin(stage);
  const load = secondDevice(stage, "load", "the diode-connected load transistor M2");
  const c = checkComponents({ id: "diode-load", components: diodeLoadComponents }, stage);
  requireEnhancement(load, `${o}: devices.load`, "load transistor M2");
  const s = polaritySign(drv.card);
  const vdd = stage.supplies.vdd;
  const vss = stage.supplies.vss ?? 0;
  const vdr = s > 0 ? vdd : -vss;
  const vsr = s > 0 ? vss : -vdd;
  const sameType = load.card.polarity === drv.card.polarity;
  const pair: Pair = {
    s,
    vdr,
    vsr,
    vg: s * c.vg,
    k1: (drv.card.kp * drv.w) / drv.l,
    vt1: s * drv.card.vt0,
    l1: drv.card.lambda ?? 0,
    k2: (load.card.kp * load.w) / load.l,
    vt02: polaritySign(load.card) * load.card.vt0,
    g2: load.card.gamma ?? 0,
    phi2: load.card.phi ?? defaultPhi,
    l2: load.card.lambda ?? 0,
    body: sameType && stage.body === "rail" && (load.card.gamma ?? 0) > 0,
    sameType,
    clm: stage.options?.clm ?? "continuous",
    ...(modelled(drv) ? { drvModel: drv } : {}),
    ...(modelled(load) ? { loadModel: load } : {}),
    bodyAtRail: sameType && stage.body === "rail",
  };
  const span = vdr - vsr;
  if (!(span > pair.vt02))
    throw new InfeasibleError(
      `the rail span VDD − VSS = ${fmt(span)} V does not exceed the load's threshold |Vt| = ${fmt(pair.vt02)} V: the diode-connected load can never conduct, so the stage has no operating point with current. The span must exceed |Vt| of the load plus the overdrive it needs.`,
      `${o}: supplies`,
    );
  return { drv, load, c, o, pair };
}

/** The load's threshold magnitude with the output at u (driver polarity). */
const loadThreshold = (p: Pair, u: number): number => (p.body ? thresholdMagnitude(p.vt02 as Volts, p.g2 as SqrtVolts, p.phi2 as Volts, (u - p.vsr) as Volts) : p.vt02);
const loadCurrent = (p: Pair, u: number): number => {
  const x = p.vdr - u;
  if (p.loadModel) return deviceCurrent(p.loadModel, x, x, p.bodyAtRail ? u - p.vsr : 0, p.clm);
  return channelCurrent(p.k2, x - loadThreshold(p, u), x, p.l2, p.clm);
};
const driverCurrentAt = (p: Pair, vg: number, u: number): number =>
  p.drvModel ? deviceCurrent(p.drvModel, vg - p.vsr, u - p.vsr, 0, p.clm) : channelCurrent(p.k1, vg - p.vsr - p.vt1, u - p.vsr, p.l1, p.clm);
const driverCurrent = (p: Pair, u: number): number => driverCurrentAt(p, p.vg, u);
const anyModel = (p: Pair): boolean => p.drvModel !== undefined || p.loadModel !== undefined;
/** The driver's current at its triode edge VDS = VOV with VOV = u − VSR (for the lower swing limit). */
const edgeCurrent = (p: Pair, u: number): number => {
  const v = u - p.vsr;
  return (p.k1 / 2) * v * v * (1 + p.l1 * v);
};

/**
 * Root of a function that is positive at lo and negative at hi (decreasing through one root), by
 * regula falsi with the Illinois modification and a bisection step whenever the bracket shrinks
 * too slowly. Tolerance 1e-13 of the span, at most 300 iterations. Allocates nothing.
 */
function decreasingRoot(f: (u: number) => number, lo: number, hi: number, origin: string): { u: number; iterations: number; width: number } {
  let flo = f(lo);
  let fhi = f(hi);
  if (flo <= 0) return { u: lo, iterations: 0, width: 0 };
  if (fhi >= 0) return { u: hi, iterations: 0, width: 0 };
  const tol = 1e-13 * Math.max(hi - lo, Math.abs(lo), Math.abs(hi)) + 1e-15;
  let side = 0;
  for (let it = 1; it <= 300; it++) {
    let u = (lo * fhi - hi * flo) / (fhi - flo);
    if (!(u > lo && u < hi) || it % 4 === 0) u = 0.5 * (lo + hi);
    const fu = f(u);
    if (fu === 0) return { u, iterations: it, width: 0 };
    if (fu > 0) {
      lo = u;
      flo = fu;
      if (side === 1) fhi /= 2;
      side = 1;
    } else {
      hi = u;
      fhi = fu;
      if (side === -1) flo /= 2;
      side = -1;
    }
    if (hi - lo <= tol) return { u: 0.5 * (lo + hi), iterations: it, width: hi - lo };
  }
  throw new ConvergenceError(`output voltage did not converge in 300 iterations (bracket ${lo}…${hi} V in device polarity)`, origin);
}

/** Output (driver polarity) where the load just stops conducting: VDR − Vt2 at that output. Recorded when `rec` is given. */
function idleOutput(p: Pair, rec?: Derivation, because?: string): number {
  if (!p.body) {
    const u = mf.diodeLoadIdleOutput.fn(p.vdr as Volts, p.vt02 as Volts);
    rec?.step(mf.diodeLoadIdleOutput, [p.vdr, p.vt02], u, because);
    return u;
  }
  const span = (p.vdr - p.vsr) as Volts;
  const y = mf.diodeLoadIdleRoot.fn(p.g2 as SqrtVolts, p.phi2 as Volts, span, p.vt02 as Volts);
  const vsb = mf.diodeLoadIdleBodyBias.fn(y, p.phi2 as Volts);
  const vt2 = df.bodyEffectThreshold.fn(p.vt02 as Volts, p.g2 as SqrtVolts, p.phi2 as Volts, vsb);
  const u = mf.diodeLoadIdleOutput.fn(p.vdr as Volts, vt2);
  if (rec) {
    rec.step(mf.diodeLoadIdleRoot, [p.g2, p.phi2, span, p.vt02], y, "the load's threshold rises with its source, so solve VDR − VOUT = Vt2(VOUT − VSR)");
    rec.note("Root rejected", `The other root y = ${fmt((-Math.sqrt(p.g2 ** 2 + 4 * (p.phi2 + span - p.vt02 + p.g2 * Math.sqrt(p.phi2))) - p.g2) / 2)} √V is negative, but y = √(2φF + VSB) ≥ 0: rejected.`);
    rec.step(mf.diodeLoadIdleBodyBias, [y, p.phi2], vsb);
    rec.step(df.bodyEffectThreshold, [p.vt02, p.g2, p.phi2, vsb], vt2);
    rec.step(mf.diodeLoadIdleOutput, [p.vdr, vt2], u, because);
  }
  return u;
}

/** Operating point (output in driver polarity) and how it was found. */
function solveOutput(p: Pair, o: string, rec?: Derivation): { u: number; method: "closed-form" | "bracketed-regula-falsi"; iterations: number; tolerance: number; cutoff: boolean } {
  const vov1 = (p.vg - p.vsr - p.vt1) as Volts;
  rec?.step(bf.railOverdrive, [p.vg, p.vsr, p.vt1], vov1, "driver overdrive: its source sits at the rail");
  // A model with subthreshold conduction (EKV) still carries current below Vt: only a driver that carries none is off.
  const off = anyModel(p) ? !(driverCurrent(p, p.vdr) > 0) : !(vov1 > 0);
  if (anyModel(p) && !off) {
    const r = decreasingRoot((u) => loadCurrent(p, u) - driverCurrent(p, u), p.vsr, p.vdr, o);
    rec?.note(
      "Exact solution with the device models",
      `Each device's current from its own model; equal currents in the output voltage, solved by bracketed regula falsi (Illinois) between the rails to VOUT = ${fmt(p.s * r.u)} V in ${r.iterations} iterations (bracket ${r.width.toExponential(2)} V). The models have no closed-form operating point.`,
    );
    return { u: r.u, method: "bracketed-regula-falsi", iterations: r.iterations, tolerance: r.width, cutoff: false };
  }
  if (off) {
    rec?.note("Driver in cutoff", `VOV1 = ${fmt(vov1)} V ≤ 0: the driver carries no current, so neither does the load. The load stops conducting once VDR − VOUT falls to its threshold:`);
    let u = idleOutput(p, rec, "the load diode at the edge of conduction");
    // Rounding may leave the load a few ulps of overdrive; step to the edge so it reads as off, as it is.
    for (let i = 0; i < 8 && p.vdr - u - loadThreshold(p, u) > 0; i++) u += Number.EPSILON * Math.max(Math.abs(u), 1);
    rec?.note(
      "Output held only by leakage",
      `In the square-law model any output from ${fmt(p.s * u)} V to the drain-side rail carries zero current in both devices; the figure given is the lower end, where the load just stops conducting. A real node settles where the leakage currents balance.`,
    );
    return { u, method: "closed-form", iterations: 0, tolerance: 0, cutoff: true };
  }
  rec?.note("The load is saturated whenever it conducts", "Gate tied to drain: VDS2 = VGS2 > VGS2 − Vt2 for an enhancement device.");
  const closed = p.l1 === 0 && p.l2 === 0 && !p.body;
  const k1 = p.k1 as AmperesPerVoltSquared;
  const k2 = p.k2 as AmperesPerVoltSquared;
  const vt2 = p.vt02 as Volts;
  const span = (p.vdr - p.vsr) as Volts;
  // Hand estimate (exact when closed): driver saturated, equal currents.
  if (rec && !closed) rec.note("First cut", `λ = 0${p.body ? " and Vt2 = Vt0 (body effect neglected)" : ""} for the hand estimate:`);
  rec?.note("Assume the driver saturated", "Equal currents (k₁/2)·VOV1² = (k₂/2)·(VDR − VOUT − Vt2)²; check VDS1 ≥ VOV1 afterwards.");
  const uSat = mf.diodeLoadOutputVoltage.fn(p.vdr as Volts, vt2, k1, k2, vov1);
  rec?.step(mf.diodeLoadOutputVoltage, [p.vdr, vt2, k1, k2, vov1], uSat);
  let uHand: number = uSat;
  if (uSat - p.vsr >= vov1) rec?.note("Assumption holds", `VDS1 = ${fmt(uSat - p.vsr)} V ≥ VOV1 = ${fmt(vov1)} V: the driver is saturated.`);
  else {
    rec?.note("Assumption fails", `VDS1 = ${fmt(uSat - p.vsr)} V < VOV1 = ${fmt(vov1)} V: the driver is in triode. Equal currents k₁·(VOV1 − VDS1/2)·VDS1 = (k₂/2)·(VDR − VSR − VDS1 − Vt2)²:`);
    const d = mf.diodeLoadTriodeDrainSource.fn(k2, span, vt2, k1, vov1);
    uHand = p.vsr + d;
    if (rec) {
      rec.step(mf.diodeLoadTriodeDrainSource, [k2, span, vt2, k1, vov1], d);
      const d2 = mf.diodeLoadTriodeDrainSourceRejected.fn(k1, vov1, k2, span, vt2);
      rec.step(mf.diodeLoadTriodeDrainSourceRejected, [k1, vov1, k2, span, vt2], d2);
      rec.note("Root rejected", `VDS' = ${fmt(d2)} V exceeds VOV1 = ${fmt(vov1)} V (outside the triode law's range) or leaves the load below its threshold: rejected. VDS1 = ${fmt(d)} V.`);
    }
  }
  // The closed form is verified (equal currents); rounding at extreme values sends it to the bracketed solve.
  if (closed) {
    const i1 = driverCurrent(p, uHand);
    const i2 = loadCurrent(p, uHand);
    const g = (p.k1 + p.k2) * Math.max(span, 1) * 2;
    if (Math.abs(i1 - i2) <= kclTolerance(i1, i2, g, Math.max(Math.abs(p.vdr), Math.abs(p.vsr)))) return { u: uHand, method: "closed-form", iterations: 0, tolerance: 0, cutoff: false };
    rec?.note("Closed form rejected", `At VOUT = ${fmt(p.s * uHand)} V the driver carries ${fmt(i1)} A and the load ${fmt(i2)} A: rounding spoils the closed form at these values. Solved again by the bracketed iteration.`);
  }
  const r = decreasingRoot((u) => loadCurrent(p, u) - driverCurrent(p, u), p.vsr, p.vdr, o);
  rec?.note(
    "Exact solution",
    `${closed ? "The closed form was rejected above" : `${p.l1 !== 0 || p.l2 !== 0 ? "λ ≠ 0" : ""}${(p.l1 !== 0 || p.l2 !== 0) && p.body ? " and " : ""}${p.body ? "the body effect on the load" : ""}: no closed form`}. Equal currents in the output voltage, solved by bracketed regula falsi (Illinois) between the rails to VOUT = ${fmt(p.s * r.u)} V in ${r.iterations} iterations (bracket ${r.width.toExponential(2)} V).`,
  );
  return { u: r.u, method: "bracketed-regula-falsi", iterations: r.iterations, tolerance: r.width, cutoff: false };
}

/** Solve the stage; records the reasoning when `rec` is given. */
export function analyzeDiodeLoad(stage: DiodeLoadStage, rec?: Derivation): StageAnalysis {
  const { drv, load, c, o, pair: p } = checkDiodeLoad(stage);
  const s = p.s;
  const pmos = s < 0;
  const vdd = stage.supplies.vdd;
  const vss = (stage.supplies.vss ?? 0) as Volts;
  if (rec) {
    rec.input("VDD", vdd, "voltage", `${o}: supplies.vdd`);
    rec.input("VSS", vss, "voltage", `${o}: supplies.vss`);
    rec.input("VG", c.vg, "voltage", `${o}: components.vg`);
    recordDevice(rec, "M1", drv, `${o}: device`);
    recordDevice(rec, "M2", load, `${o}: devices.load`);
    rec.assume("No DC gate current (insulated gates); the output is unloaded.");
    rec.assume(modelAssumption([["M1", drv], ["M2", load]], p.clm));
    rec.assume(
      p.sameType
        ? p.body
          ? "Same-type load with its body at the driver's source rail: its source is the output, so VSB = VOUT − VSR and the body effect raises its threshold."
          : stage.body === "rail"
            ? "Same-type load with its body at the rail, but γ = 0: no body effect."
            : "Same-type load with its body tied to its own source (a separate well): VSB = 0, no body effect. On a common substrate give body: \"rail\"."
        : "Complementary load: its source sits at its own rail, so VSB = 0 and there is no body effect.",
    );
    if (pmos) rec.note("Sign convention (PMOS)", `${pmosConvention} Here, for the PMOS driver, VDR = −VSS = ${fmt(p.vdr)} V and VSR = −VDD = ${fmt(p.vsr)} V.`);
  }
  const r = solveOutput(p, o, rec);
  const u = r.u;
  // Devices at the solved nodes, in absolute volts.
  const out = s * u;
  const railD = s * p.vdr;
  const railS = s * p.vsr;
  const idNet = driverCurrent(p, u);
  const vds1 = u - p.vsr;
  const vload = p.vdr - u;
  const p1 = bf.devicePower.fn(idNet as Amperes, vds1 as Volts);
  const p2 = bf.devicePower.fn(idNet as Amperes, vload as Volts);
  const m1 = evaluateDevice(drv, { gate: c.vg, source: railS, drain: out, body: railS }, p.clm, p1, "M1 (driver) at the solved node voltages", rec);
  const m2 = evaluateDevice(
    load,
    p.sameType ? { gate: railD, drain: railD, source: out, body: stage.body === "rail" ? railS : out } : { gate: out, drain: out, source: railD, body: railD },
    p.clm,
    p2,
    "M2 (load) at the solved node voltages",
    rec,
  );
  const iLoad = Math.abs(m2.small.op.channelCurrent);
  // Verify (verify.ts): KCL at the output, or ConvergenceError.
  const g = m1.small.gm + m1.small.gds + m2.small.gm + m2.small.gmb + m2.small.gds;
  const vScale = Math.max(Math.abs(railD), Math.abs(railS), Math.abs(c.vg), Math.abs(out));
  const kcl = verifyCurrent("the output node", iLoad, idNet, g, vScale, o);
  if (pmos) rec?.note("Node voltages to ground", `Mirrored back: output at ${fmt(out)} V, driver source at ${fmt(railS)} V, load rail at ${fmt(railD)} V, gate at ${fmt(c.vg)} V. The driver sees VSG = ${fmt(railS - c.vg)} V and VSD = ${fmt(railS - out)} V.`);
  if (rec) {
    rec.step(bf.devicePower, [idNet, vds1], p1, "driver dissipation");
    rec.step(bf.devicePower, [idNet, vload], p2, "load dissipation");
  }
  const total = (p1 + p2) as Watts;

  // Small-signal view.
  const gmb2 = (p.body || (p.loadModel && p.bodyAtRail) ? m2.small.gmb : 0) as Siemens;
  const amplifiers: AmplifierMetrics[] = [];
  const on = !r.cutoff;
  if (on) amplifiers.push(gainView(p, m1.small, m2.small, gmb2, rec));
  else rec?.note("Small-signal gain", "The driver is in cutoff: there is no transconductance and no gain.");
  const swing: SwingLimits[] = on ? [outputSwing(p, u, o, rec)] : [];

  // Checks and findings.
  const lim = stage.limits ?? {};
  const pol = pmos ? { gs: "VSG", ds: "VSD" } : { gs: "VGS", ds: "VDS" };
  const vov1 = m1.small.op.vov;
  const checks: StageCheck[] = [];
  checks.push(stageCheck(`Driver overdrive ${pol.gs}1 − |Vt1|`, vov1, "voltage", { min: lim.minOverdrive ?? 0 }, rec, "the driver must be on"));
  const findings: string[] = [];
  if (on) {
    // A model's triode edge is its own VDsat (recorded with the driver's operating point above).
    const m = p.drvModel ? m1.small.op.saturationMargin : bf.saturationMargin.fn(vds1 as Volts, vov1);
    if (!p.drvModel) rec?.step(bf.saturationMargin, [vds1, vov1], m, "driver margin to the triode edge");
    checks.push(stageCheck(`Driver saturation margin ${pol.ds}1 − ${p.drvModel ? "VDsat1" : "VOV1"}`, m, "voltage", { min: lim.minSaturationMargin ?? 0 }, rec));
    checks.push(stageCheck("Load overdrive (the load conducts)", m2.small.op.vov, "voltage", { min: 0 }, rec, "a diode-connected load is saturated whenever it conducts"));
    if (m < 0) findings.push(`The driver is in triode: ${pol.ds}1 = ${fmt(vds1)} V is below ${p.drvModel ? "VDsat1" : "VOV1"} = ${fmt(vds1 - m)} V by ${fmt(-m)} V; the gain collapses. Lower the gate drive or make the load weaker relative to the driver.`);
    else if (m < 0.05) findings.push(`Driver saturation margin is only ${fmt(m)} V: tolerances or temperature may push it into triode.`);
    if (!p.drvModel && vov1 < 0.05) findings.push(`Driver overdrive is only ${fmt(vov1)} V: near weak inversion, where the square law overstates the current (common practice).`);
  } else
    findings.push(
      `The driver is in cutoff: ${pol.gs}1 − |Vt1| = ${fmt(vov1)} V ≤ 0, so no current flows and the output floats between ${fmt(out)} V and the ${pmos ? "lower" : "upper"} rail (held only by leakage, not modelled). Raise the gate drive to turn it on.`,
    );
  if (lim.maxDevicePower !== undefined) {
    checks.push(stageCheck("Driver dissipation", p1, "power", { max: lim.maxDevicePower }, rec));
    checks.push(stageCheck("Load dissipation", p2, "power", { max: lim.maxDevicePower }, rec));
  }
  if (lim.maxTotalPower !== undefined) checks.push(stageCheck("Total supply power", total, "power", { max: lim.maxTotalPower }, rec));
  checks.push(...partChecks(stage.device, { vgs: s * c.vg - p.vsr, vds: vds1, id: idNet, power: p1 }, "driver", rec), ...partChecks(stage.devices?.load, { vgs: vload, vds: vload, id: idNet, power: p2 }, "load", rec));
  // The solver's own check (verify.ts) comes after the design checks.
  rec?.check(`${solverCheckPrefix}load current equals driver current (KCL at the output)`, kcl, "current", { max: kclTolerance(iLoad, idNet, g, vScale) }, "residual of the solved output voltage; tolerance 1e-9·I + G·δV");
  if (p.sameType && stage.body !== "rail" && (load.card.gamma ?? 0) > 0) findings.push("The load's body is tied to its own source: that needs a separate well. On a common substrate set body to \"rail\" for the body effect.");
  findings.push(handCaution([drv, load]));
  recordFindings(findings, rec);
  return {
    topology: "diode-load",
    ...(stage.name ? { name: stage.name } : {}),
    polarity: drv.card.polarity,
    region: m1.small.op.region,
    nodes: { gate: c.vg as Volts, source: railS as Volts, drain: out as Volts, body: railS as Volts, vdd, vss },
    currents: { drainMagnitude: idNet as Amperes, load: idNet as Amperes, supply: idNet as Amperes },
    op: m1.small.op,
    smallSignal: m1.analysis.smallSignal,
    metrics: { amplifiers, swing, checks },
    power: { components: {}, transistor: p1, total },
    solver: { method: r.method, iterations: r.iterations, tolerance: r.tolerance, unknown: r.method === "closed-form" ? "none" : "output voltage" },
    findings,
    devices: { load: m2.analysis },
  };
}

function gainView(p: Pair, s1: { gm: Siemens; gds: Siemens }, s2: { gm: Siemens; gds: Siemens; op: { vsbDevice: Volts } }, gmb2: Siemens, rec?: Derivation): AmplifierMetrics {
  const av = mf.diodeLoadGain.fn(s1.gm, s2.gm, gmb2, s1.gds, s2.gds);
  const rout = mf.diodeLoadOutputResistance.fn(s2.gm, gmb2, s1.gds, s2.gds);
  if (rec) {
    rec.note("Common source with a diode-connected load", `Input at the gate, output at the drain; the load presents 1/(gm2${p.body ? " + gmb2" : ""}) in parallel with both ro:`);
    rec.step(mf.diodeLoadGain, [s1.gm, s2.gm, gmb2, s1.gds, s2.gds], av);
    rec.step(mf.diodeLoadOutputResistance, [s2.gm, gmb2, s1.gds, s2.gds], rout);
    const rough = mf.diodeLoadGainNoRo.fn(s1.gm, s2.gm, gmb2);
    rec.step(mf.diodeLoadGainNoRo, [s1.gm, s2.gm, gmb2], rough, "the hand estimate, ro neglected");
    if (!anyModel(p)) {
      // The square law's sizing rule; with another model the gain above, from its gm and gds, is the figure.
      const k1 = p.k1 as AmperesPerVoltSquared;
      const k2 = p.k2 as AmperesPerVoltSquared;
      let eta = 0 as Ratio;
      if (p.body) eta = rec.calc(mf.bodyEffectRatio, [p.g2 as SqrtVolts, p.phi2 as Volts, s2.op.vsbDevice], "the load's source is the output");
      const sized = mf.diodeLoadGainSizing.fn(k1, k2, eta);
      rec.step(mf.diodeLoadGainSizing, [k1, k2, eta], sized, "the gain set by the sizes alone (λ = 0, driver saturated)");
    }
  }
  return {
    kind: "common-source",
    inputNode: "gate",
    outputNode: "drain",
    gain: av,
    rin: Infinity as Ohms,
    rout,
    note: `diode-connected ${p.sameType ? "same-type" : "complementary"} load, ro of both devices ${p.body ? "and the load's gmb " : ""}included; gate driven directly; unloaded`,
  };
}

/** Output range with the driver saturated and the load on: up to where the driver cuts off, down to the driver's triode edge. */
function outputSwing(p: Pair, u: number, o: string, rec?: Derivation): SwingLimits {
  rec?.note("Output swing", "As the input falls the driver cuts off and the output rises until the load stops conducting; as it rises the output falls until the driver reaches its triode edge, VDS1 = VOV1.");
  const up = idleOutput(p, rec, "upper end: driver cut off");
  let lo: number;
  if (anyModel(p)) {
    lo = modelTriodeEdge(p, up);
    rec?.note("Lower end", `With the device models the driver's triode edge is VDS1 = VDsat1 at the gate voltage that puts the output there (found by nested bracketed solves): VOUT = ${fmt(p.s * lo)} V.`);
  } else if (p.l1 === 0 && p.l2 === 0 && !p.body) lo = rec ? rec.calc(mf.diodeLoadLowerSwing, [p.k2 as AmperesPerVoltSquared, p.vdr as Volts, p.vt02 as Volts, p.k1 as AmperesPerVoltSquared, p.vsr as Volts]) : mf.diodeLoadLowerSwing.fn(p.k2 as AmperesPerVoltSquared, p.vdr as Volts, p.vt02 as Volts, p.k1 as AmperesPerVoltSquared, p.vsr as Volts);
  else {
    lo = decreasingRoot((x) => loadCurrent(p, x) - edgeCurrent(p, x), p.vsr, up, o).u;
    rec?.note("Lower end", `With λ${p.body ? " and the body effect" : ""} the driver's triode edge is where the load current equals (k₁/2)·(VOUT − VSR)²·(1 + λ₁·(VOUT − VSR)): VOUT = ${fmt(p.s * lo)} V (solved numerically).`);
  }
  return swingInVolts(p.s, "drain", u, up, lo, "load stops conducting (driver cut off)", "driver triode edge VDS1 = VOV1");
}

/**
 * The lowest output with the driver saturated, for model cards: the output u where the gate voltage
 * that makes the stage settle at u puts the driver at VDS1 = VDsat1. As u falls the load current and
 * with it the needed gate voltage and VDsat1 rise, so u − VSR − VDsat1 falls: one root, by bisection
 * (1e-12 V); the gate voltage at each u by bisection on the driver's current (monotone in VGS).
 */
function modelTriodeEdge(p: Pair, up: number): number {
  // NaN when no gate voltage within 64 V of the rail carries the load's current (a mobility-limited driver near VDS = 0): the driver is then in triode there.
  const gateFor = (u: number): number => {
    const target = loadCurrent(p, u);
    let a = p.vsr;
    let b = p.vsr + 1;
    for (let k = 0; driverCurrentAt(p, b, u) < target; k++) {
      if (k >= 6) return NaN;
      b += 2 ** k;
    }
    for (let k = 0; k < 200 && b - a > 1e-12 * Math.max(1, Math.abs(b)); k++) {
      const m = (a + b) / 2;
      if (driverCurrentAt(p, m, u) < target) a = m;
      else b = m;
    }
    return (a + b) / 2;
  };
  const drv = p.drvModel;
  const margin = (u: number): number => {
    const vg = gateFor(u);
    if (vg !== vg) return -1;
    const vdsat = drv ? operatingPoint(drv, { vgs: (p.s * (vg - p.vsr)) as Volts, vds: (p.s * (u - p.vsr)) as Volts, vsb: 0 as Volts }).vdsat : vg - p.vsr - p.vt1;
    return u - p.vsr - vdsat;
  };
  let a = p.vsr + 1e-9;
  let b = up;
  if (margin(a) >= 0) return a;
  if (margin(b) <= 0) return b;
  for (let k = 0; k < 200 && b - a > 1e-12 * Math.max(1, Math.abs(a), Math.abs(b)); k++) {
    const m = (a + b) / 2;
    if (margin(m) < 0) a = m;
    else b = m;
  }
  return (a + b) / 2;
}

/** SPICE lines: two Level 1 models, supplies, gate source, driver with a 0 V ammeter in its drain lead, diode-connected load. */
export function diodeLoadSpice(stage: DiodeLoadStage, prefix = ""): SpiceCircuit {
  const { drv, load, c, pair } = checkDiodeLoad(stage);
  const p = spicePrefix(prefix, "SPICE name prefix");
  const n = (name: string) => `${p}${name}`;
  const pmos = pair.s < 0;
  const vdd = n("vdd");
  const vss = n("vss");
  const drail = pmos ? vss : vdd;
  const srail = pmos ? vdd : vss;
  const safe = (x: string) => x.replace(/[^A-Za-z0-9_]/g, "_");
  const modD = safe(`${p}moddrv`);
  const modL = safe(`${p}modload`);
  const g = n("g");
  const d = n("d");
  const out = n("out");
  const ammeter = `V${p}ID`;
  const lines = [modelLine(modD, drv.card), modelLine(modL, load.card), `V${p}DD ${vdd} 0 ${spiceNumber(stage.supplies.vdd)}`, `V${p}SS ${vss} 0 ${spiceNumber(stage.supplies.vss ?? 0)}`];
  lines.push(`V${p}G ${g} 0 ${spiceNumber(c.vg)}`);
  lines.push(`${ammeter} ${out} ${d} 0`);
  lines.push(`M${p}1 ${d} ${g} ${srail} ${srail} ${modD} W=${spiceNumber(drv.w)} L=${spiceNumber(drv.l)}${diffusionText(drv)}`);
  let loadNodes: { gate: string; drain: string; source: string; body: string };
  if (pair.sameType) loadNodes = { drain: drail, gate: drail, source: out, body: stage.body === "rail" ? srail : out };
  else loadNodes = { drain: out, gate: out, source: drail, body: drail };
  lines.push(`M${p}2 ${loadNodes.drain} ${loadNodes.gate} ${loadNodes.source} ${loadNodes.body} ${modL} W=${spiceNumber(load.w)} L=${spiceNumber(load.l)}${diffusionText(load)}`);
  return {
    lines,
    nodes: { gate: g, source: srail, drain: d, body: srail, output: out, vdd, vss, loadGate: loadNodes.gate, loadSource: loadNodes.source, loadDrain: loadNodes.drain, loadBody: loadNodes.body },
    drainAmmeter: ammeter,
    instance: `M${p}1`,
    instances: { load: `M${p}2` },
    models: { [modD]: drv.card.polarity, [modL]: load.card.polarity },
  };
}

export const diodeLoad: Topology<"diode-load", DiodeLoadComponents> = {
  id: "diode-load",
  title: "Common source with a diode-connected load",
  description:
    "Driver (device) with its gate at vg and its source at its rail; diode-connected load (devices.load) from the output to the drain-side rail: the complementary type (source at the rail) or the same type (source at the output, body effect with body: \"rail\").",
  components: diodeLoadComponents,
  analyze: (stage, rec) => analyzeDiodeLoad(stage, rec),
  spice: (stage, prefix) => diodeLoadSpice(stage, prefix),
};

