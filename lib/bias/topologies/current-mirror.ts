/**
 * Two-transistor current mirror with a reference resistor.
 *
 * NMOS (sinking): RREF from vdd to the drain and gate of M1 (`devices.reference`),
 * M1's source at vss; M2 (`device`) shares the gate, its source at vss, and its
 * drain is the output. PMOS (sourcing): the mirror image, sources at vdd and
 * RREF to vss. The output either sits at an ideal voltage `vout` or drives a
 * load resistor `rload` returning to the drain-side rail (vdd for an NMOS sink,
 * vss for a PMOS source). Both sources sit at their rail, so there is no body
 * effect whichever way the body is tied.
 *
 * The numbers are in device polarity (PMOS voltages negated) as in solve.ts:
 * the reference branch is the canonical network with the gate tied to the
 * drain and RREF as the drain resistor; a load resistor makes the output a
 * fixed-gate network with RLOAD as its drain resistor.
 *
 * Square-law cards use the closed forms (verified, with the bracketed solve as
 * fallback). A card of another model (square law with mobility degradation, EKV)
 * solves both branches through the model layer: the same canonical networks by
 * solve-model.ts (regula falsi, tolerance 1e-12 relative, ConvergenceError), the
 * held output by the model's current, compliance at the model's VDsat; the
 * result is verified against the device's own model like every other solve.
 */
import { defaultPhi, type Device } from "../../device/card.js";
import { deviceCurrent, drainCurrent, operatingPoint, type ClmMode } from "../../device/drain-current.js";
import { InfeasibleError, InputError } from "../../errors.js";
import * as bf from "../../formulas/bias.formulas.js";
import * as df from "../../formulas/device.formulas.js";
import * as mf from "../../formulas/mirror.formulas.js";
import type { Amperes, AmperesPerVoltSquared, Ohms, PerVolt, Ratio, Volts, Watts } from "../../quantity.js";
import { solverCheckPrefix, type Derivation } from "../../record/derivation.js";
import { checkComponents, checkStage, pmosConvention } from "../stage.js";
import { newSolution, solveNetwork, type BiasNetwork } from "../solve.js";
import { kclTolerance, verifyCurrent } from "../verify.js";
import type { ComponentField, CurrentMirrorComponents, SolveMethod, SpiceCircuit, Stage, StageAnalysis, StageCheck, Topology } from "../topology.js";
import { diffusionText, spiceNumber } from "../spice.js";
import { spicePrefix } from "../../spice/deck.js";
import { evaluateDevice, fmt, handCaution, modelAssumption, modelled, modelLine, partChecks, recordDevice, recordFindings, requireEnhancement, sameProcess, secondDevice, stageCheck, stageOrigin, swingInVolts } from "./two-transistor.js";

export const mirrorComponents: readonly ComponentField[] = [
  { name: "rref", dim: "resistance", required: true, meaning: "reference resistor from the drain-side rail to the diode-connected reference transistor" },
  { name: "vout", dim: "voltage", required: false, meaning: "output voltage held by an ideal source (absolute; give vout or rload)" },
  { name: "rload", dim: "resistance", required: false, meaning: "load resistor from the output to the drain-side rail (give vout or rload)" },
];

/** The mirror's own figures, beyond the common stage analysis. */
export interface MirrorFigures {
  readonly referenceCurrent: Amperes;
  readonly outputCurrent: Amperes;
  /** k2/k1: (W/L)2/(W/L)1 when both transistors share a card. */
  readonly ratio: Ratio;
  /** IREF·N: the output current with λ = 0 and the output saturated. */
  readonly idealOutputCurrent: Amperes;
  /** Absolute gate-source voltage of the pair (negative for a PMOS). */
  readonly gateSource: Volts;
  /** Output compliance: the output voltage (absolute) at which M2 leaves saturation. */
  readonly compliance: Volts;
  /** VDS2 − VOV in device polarity: ≥ 0 above compliance. */
  readonly complianceMargin: Volts;
  /** Small-signal output resistance of the current source, ro2 (Infinity with λ = 0 in saturation). */
  readonly outputResistance: Ohms;
}

export interface MirrorAnalysis extends StageAnalysis {
  readonly mirror: MirrorFigures;
}

export type CurrentMirrorStage = Stage<"current-mirror", CurrentMirrorComponents>;

interface Checked {
  readonly out: Device;
  readonly ref: Device;
  readonly c: CurrentMirrorComponents;
  readonly o: string;
}

function checkMirror(stage: CurrentMirrorStage): Checked {
  const out = checkStage(stage as unknown as Stage);
  const o = stageOrigin(stage);
  const ref = secondDevice(stage, "reference", "the diode-connected reference transistor M1");
  const c = checkComponents({ id: "current-mirror", components: mirrorComponents }, stage);
  if (!(c.rref > 0))
    throw new InputError(c.rref, "a reference resistance RREF > 0 Ω (RREF sets the reference current; 0 Ω would put the rail straight across the diode-connected transistor)", `${o}: components.rref`);
  const hasV = c.vout !== undefined;
  const hasR = c.rload !== undefined;
  if (hasV === hasR)
    throw new InputError(hasV ? "both vout and rload" : "neither vout nor rload", "exactly one of components.vout (an output voltage) or components.rload (a load resistor to the drain-side rail)", `${o}: components`, "invalid-design");
  const vdd = stage.supplies.vdd;
  const vss = stage.supplies.vss ?? 0;
  if (hasV && (c.vout! < vss || c.vout! > vdd))
    throw new InputError(c.vout, `an output voltage from VSS = ${vss} V to VDD = ${vdd} V (beyond the rails the drain junction would conduct, which the square law does not model)`, `${o}: components.vout`);
  if (ref.card.polarity !== out.card.polarity)
    throw new InputError(ref.card.polarity, `"${out.card.polarity}", the polarity of the output transistor: a mirror pairs two devices of one type`, `${o}: devices.reference.card.polarity`);
  requireEnhancement(ref, `${o}: devices.reference`, "reference transistor M1");
  return { out, ref, c, o };
}

/** The drain-side and source-side rails in device polarity. */
function rails(stage: Stage<string, unknown>, sign: 1 | -1): { vdr: number; vsr: number } {
  const vdd = stage.supplies.vdd;
  const vss = stage.supplies.vss ?? 0;
  return sign > 0 ? { vdr: vdd, vsr: vss } : { vdr: -vss, vsr: -vdd };
}

/** Solve the reference branch: VGS1 (device polarity, above VSR) and IREF. */
function solveReference(ref: Device, rref: number, vdr: number, vsr: number, clm: ClmMode, o: string, rec?: Derivation): { vgs: number; iref: number; method: SolveMethod; iterations: number; tolerance: number } {
  const card = ref.card;
  const sign = card.polarity === "nmos" ? 1 : -1;
  const k1 = df.deviceGain.fn(card.kp, ref.w, ref.l);
  const vt = (sign * card.vt0) as Volts;
  const lambda = (card.lambda ?? 0) as PerVolt;
  const span = (vdr - vsr) as Volts;
  const rr = rref as Ohms;
  if (modelled(ref)) {
    // The model's own current in the canonical network: gate tied to drain, RREF as the drain resistor (solve-model.ts).
    rec?.note("M1 at its diode connection", "Gate tied to drain: VDS1 = VGS1, above the model's VDsat whenever M1 conducts in strong or moderate inversion; its current comes from the device model.");
    const net: BiasNetwork = { k: k1, vt0: vt, gamma: 0, phi: defaultPhi, lambda, clm, vdr, vsr, gateToDrain: true, vg: 0, rd: rref, rs: 0, iss: 0, bodyToRail: false, device: ref };
    const sol = solveNetwork(net, newSolution(), o, rec);
    const vgs = (sol.vd - vsr) as Volts;
    const iref = mf.referenceCurrent.fn(span, vgs, rr);
    rec?.step(mf.referenceCurrent, [span, vgs, rr], iref, "the current through RREF at the solved VGS1; M1's model carries the same (verified below)");
    return { vgs, iref, method: sol.method, iterations: sol.iterations, tolerance: sol.tolerance };
  }
  const vov0 = mf.referenceOverdriveAtRail.fn(span, vt);
  if (rec) {
    rec.step(df.deviceGain, [card.kp, ref.w, ref.l], k1, "reference transistor M1");
    rec.step(mf.referenceOverdriveAtRail, [span, vt], vov0, "the most overdrive M1 could have, with no drop across RREF");
  }
  if (!(vov0 > 0)) {
    const pol = sign > 0 ? "VDD − VSS" : "VDD − VSS (for the PMOS, VSG is at most this)";
    throw new InfeasibleError(
      `the rail span ${pol} = ${fmt(span)} V does not exceed M1's threshold |Vt| = ${fmt(vt)} V (short by ${fmt(vt - span)} V): the diode-connected reference transistor never turns on, so no reference current flows. The span must exceed |Vt| plus the overdrive the wanted current needs, VOV = √(2·IREF/k₁) with k₁ = ${fmt(k1)} A/V² (e.g. ${fmt(Math.sqrt((2 * 100e-6) / k1))} V for 100 µA).`,
      `${o}: supplies`,
    );
  }
  rec?.note(
    "M1 is saturated whenever it conducts",
    "Gate tied to drain: VDS1 = VGS1, so VDS1 − VOV1 = VGS1 − (VGS1 − Vt) = Vt > 0 for an enhancement device. Saturation holds by construction; only its current needs solving.",
  );
  const closed = lambda === 0;
  // λ = 0: the quadratic in VGS1 from IREF = (VDR − VSR − VGS1)/RREF = (k₁/2)·(VGS1 − Vt)².
  const vgs0 = mf.referenceGateSource.fn(vt, span, k1, rr);
  if (rec) {
    if (!closed) rec.note("First cut", "λ = 0 (no channel-length modulation) for the hand estimate:");
    rec.step(mf.referenceGateSource, [vt, span, k1, rr], vgs0, "RREF branch: (VDR − VSR − VGS1)/RREF = (k₁/2)·(VGS1 − Vt)²");
    const r2 = mf.referenceGateSourceRejected.fn(vt, k1, rr, span);
    rec.step(mf.referenceGateSourceRejected, [vt, k1, rr, span], r2);
    rec.note("Root rejected", `VGS1' = ${fmt(r2)} V lies below Vt = ${fmt(vt)} V, where the transistor is off and the square law does not apply: rejected. VGS1 = ${fmt(vgs0)} V.`);
  }
  // The closed form is verified (KCL at the diode); rounding at extreme values sends it to the bracketed solve.
  const iref0 = mf.referenceCurrent.fn(span, vgs0, rr);
  const idiode0 = mf.referenceCurrentDiode.fn(k1, vgs0, vt, lambda);
  const closedHolds = closed && Math.abs(idiode0 - iref0) <= kclTolerance(idiode0, iref0, k1 * Math.max(vgs0 - vt, 0) * 2 + 1 / rref, Math.max(Math.abs(vdr), Math.abs(vsr)));
  if (closed && !closedHolds) rec?.note("Closed form rejected", `At VGS1 = ${fmt(vgs0)} V the diode carries ${fmt(idiode0)} A but RREF carries ${fmt(iref0)} A: rounding spoils the closed form at these values. Solved again by the bracketed iteration.`);
  if (closedHolds) {
    const iref = mf.referenceCurrent.fn(span, vgs0, rr);
    if (rec) {
      rec.step(mf.referenceCurrent, [span, vgs0, rr], iref);
      rec.step(mf.referenceCurrentDiode, [k1, vgs0, vt, lambda], mf.referenceCurrentDiode.fn(k1, vgs0, vt, lambda), "the same current through M1 (a check on the root)");
    }
    return { vgs: vgs0, iref, method: "closed-form", iterations: 0, tolerance: 0 };
  }
  // λ ≠ 0: (1 + λ·VGS1) makes it a cubic; solve the canonical network (gate tied to drain, RREF as drain resistor).
  const net: BiasNetwork = { k: k1, vt0: vt, gamma: 0, phi: defaultPhi, lambda, clm, vdr, vsr, gateToDrain: true, vg: 0, rd: rref, rs: 0, iss: 0, bodyToRail: false };
  const sol = solveNetwork(net, newSolution(), o);
  const vgs = (sol.vd - vsr) as Volts;
  const iref = mf.referenceCurrent.fn(span, vgs, rr);
  if (rec) {
    rec.note(
      "Exact reference branch",
      `With λ ≠ 0 the diode current carries (1 + λ·VGS1) and the branch equation is a cubic: solved by a bracketed Newton iteration in IREF to VGS1 = ${fmt(vgs)} V in ${sol.iterations} iterations (tolerance 1e-12 relative).`,
    );
    rec.step(mf.referenceCurrent, [span, vgs, rr], iref);
    rec.step(mf.referenceCurrentDiode, [k1, vgs, vt, lambda], mf.referenceCurrentDiode.fn(k1, vgs, vt, lambda), "the same current through M1, with (1 + λ·VGS1)");
  }
  return { vgs, iref, method: sol.method, iterations: sol.iterations, tolerance: sol.tolerance };
}

/** Solve the mirror; records the reasoning when `rec` is given. */
export function analyzeMirror(stage: CurrentMirrorStage, rec?: Derivation): MirrorAnalysis {
  const { out, ref, c, o } = checkMirror(stage);
  const sign = out.card.polarity === "nmos" ? 1 : -1;
  const pmos = sign < 0;
  const clm: ClmMode = stage.options?.clm ?? "continuous";
  const { vdr, vsr } = rails(stage, sign);
  const vdd = stage.supplies.vdd;
  const vss = (stage.supplies.vss ?? 0) as Volts;
  const matched = sameProcess(ref.card, out.card);
  if (rec) {
    rec.input("VDD", vdd, "voltage", `${o}: supplies.vdd`);
    rec.input("VSS", vss, "voltage", `${o}: supplies.vss`);
    rec.input("RREF", c.rref, "resistance", `${o}: components.rref`);
    if (c.vout !== undefined) rec.input("VOUT", c.vout, "voltage", `${o}: components.vout`);
    if (c.rload !== undefined) rec.input("RLOAD", c.rload, "resistance", `${o}: components.rload`);
    recordDevice(rec, "M1", ref, `${o}: devices.reference`);
    recordDevice(rec, "M2", out, `${o}: device`);
    rec.assume("No DC gate current (insulated gates): all of IREF flows in M1.");
    rec.assume(modelAssumption([["M1", ref], ["M2", out]], clm));
    rec.assume("Both sources sit at their rail, so VSB = 0 and there is no body effect, whichever way the body is tied.");
    rec.assume("M1 and M2 are matched (same threshold and k' on one die); mismatch is not modelled.");
    if (pmos)
      rec.note("Sign convention (PMOS)", `${pmosConvention} Here VDR = −VSS = ${fmt(vdr)} V, VSR = −VDD = ${fmt(vsr)} V; the sources sit at VDD and RREF returns to VSS.`);
  }
  rec?.note("Reference branch", `RREF from the ${pmos ? "lower rail to the drain and gate of M1, whose source is at VDD" : "upper rail to the drain and gate of M1, whose source is at VSS"}.`);
  const r = solveReference(ref, c.rref, vdr, vsr, clm, o, rec);
  const vgs = r.vgs as Volts;
  const iref = r.iref as Amperes;

  // Output branch: M2 sees the same VGS.
  const k1 = df.deviceGain.fn(ref.card.kp, ref.w, ref.l);
  const k2 = df.deviceGain.fn(out.card.kp, out.w, out.l);
  const vt2 = (sign * out.card.vt0) as Volts;
  const lambda2 = (out.card.lambda ?? 0) as PerVolt;
  const ratio = mf.mirrorRatio.fn(k2, k1);
  const outModel = modelled(out);
  let vov2 = df.overdrive.fn(vgs, vt2);
  let compliance = mf.mirrorCompliance.fn(vsr as Volts, vov2);
  if (rec) {
    rec.step(df.deviceGain, [out.card.kp, out.w, out.l], k2, "output transistor M2");
    rec.step(mf.mirrorRatio, [k2, k1], ratio, matched ? "one card for both, so N = (W/L)2/(W/L)1" : "the cards differ: N alone does not fix the output current");
    if (!outModel) {
      rec.step(df.overdrive, [vgs, vt2], vov2, "M2 shares M1's gate and its source rail");
      rec.step(mf.mirrorCompliance, [vsr, vov2], compliance, "M2 stays saturated while VDS2 ≥ VOV");
    }
  }
  let vds2: number;
  let iout: number;
  let method: SolveMethod = r.method;
  let iterations = r.iterations;
  let tolerance = r.tolerance;
  if (outModel) {
    // M2 through its own model: the held output by its current, a load resistor by the canonical fixed-gate network.
    if (c.vout !== undefined) {
      vds2 = sign * c.vout - vsr;
      iout = deviceCurrent(out, vgs, vds2, 0, clm);
      rec?.note("Output held", `An ideal source holds the output at ${fmt(c.vout)} V to ground, so ${pmos ? "VSD2" : "VDS2"} = ${fmt(vds2)} V; M2's model gives IOUT = ${fmt(iout)} A at the mirror's ${pmos ? "VSG" : "VGS"}.`);
    } else {
      rec?.note("Output branch", `M2's gate is held at the mirror's gate voltage and RLOAD returns its drain to the ${pmos ? "lower" : "upper"} rail: a fixed-gate network, solved with M2's model.`);
      const net: BiasNetwork = { k: k2, vt0: vt2, gamma: 0, phi: defaultPhi, lambda: lambda2, clm, vdr, vsr, gateToDrain: false, vg: vsr + vgs, rd: c.rload!, rs: 0, iss: 0, bodyToRail: false, device: out };
      const sol = solveNetwork(net, newSolution(), o, rec);
      vds2 = sol.vd - vsr;
      iout = sol.id;
      method = sol.method;
      iterations += sol.iterations;
      tolerance = Math.max(tolerance, sol.tolerance);
    }
    // Compliance at the model's own saturation voltage (it depends on VGS and VSB, not on VDS).
    const op2 = operatingPoint(out, { vgs: (sign * vgs) as Volts, vds: (sign * Math.max(vds2, 0)) as Volts, vsb: 0 as Volts });
    vov2 = op2.vov;
    compliance = rec ? rec.calc(mf.mirrorComplianceSaturation, [vsr as Volts, op2.vdsat], "M2 stays saturated while VDS2 ≥ VDsat of its model") : mf.mirrorComplianceSaturation.fn(vsr as Volts, op2.vdsat);
  } else if (c.vout !== undefined) {
    vds2 = sign * c.vout - vsr;
    rec?.note("Output held", `An ideal source holds the output at ${fmt(c.vout)} V to ground, so VDS2 = ${pmos ? `−VOUT − VSR = ${fmt(-c.vout)} − (${fmt(vsr)})` : `VOUT − VSR`} = ${fmt(vds2)} V${vds2 >= vov2 ? " ≥ VOV: M2 is saturated" : " < VOV: below compliance, M2 is in triode"}.`);
    iout = outputCurrent(vov2, vds2, k2, lambda2, clm, iref, ratio, vgs, matched, rec);
  } else {
    rec?.note("Output branch", `M2's gate is held at the mirror's gate voltage and RLOAD returns its drain to the ${pmos ? "lower" : "upper"} rail: a fixed-gate network, solved the same way.`);
    const net: BiasNetwork = { k: k2, vt0: vt2, gamma: 0, phi: defaultPhi, lambda: lambda2, clm, vdr, vsr, gateToDrain: false, vg: vsr + vgs, rd: c.rload!, rs: 0, iss: 0, bodyToRail: false };
    const sol = solveNetwork(net, newSolution(), o, rec);
    vds2 = sol.vd - vsr;
    iout = sol.id;
    if (sol.method !== "closed-form") method = sol.method;
    iterations += sol.iterations;
    tolerance = Math.max(tolerance, sol.tolerance);
    if (rec && vds2 >= vov2 && vov2 > 0 && matched) {
      const check = mf.mirrorOutputCurrent.fn(iref, ratio, lambda2, vds2 as Volts, vgs);
      rec.step(mf.mirrorOutputCurrent, [iref, ratio, lambda2, vds2, vgs], check, "the mirror relation at the solved VDS2 (a check)");
    }
  }
  const vOut = sign * (vsr + vds2);
  const complianceMargin = vds2 - (compliance - vsr);

  // Devices at the solved nodes.
  const gateAbs = sign * (vsr + vgs);
  const srcAbs = sign * vsr;
  const p1 = bf.devicePower.fn(iref, vgs);
  const p2 = bf.devicePower.fn(iout as Amperes, vds2 as Volts);
  const m1 = evaluateDevice(ref, { gate: gateAbs, source: srcAbs, drain: gateAbs, body: srcAbs }, clm, p1, "M1 at the solved node voltages", rec);
  const m2 = evaluateDevice(out, { gate: gateAbs, source: srcAbs, drain: vOut, body: srcAbs }, clm, p2, "M2 at the solved node voltages", rec);
  // Verify both branches (verify.ts): KCL at M1's drain and at the output, or ConvergenceError.
  const vScale = Math.max(Math.abs(vdr), Math.abs(vsr), Math.abs(vOut));
  const g1 = m1.small.gm + m1.small.gds + 1 / c.rref;
  const g2 = m2.small.gm + m2.small.gds + (c.rload ? 1 / c.rload : 0);
  const kcl1 = verifyCurrent("the reference diode M1", Math.abs(m1.small.op.channelCurrent), iref, g1, vScale, o);
  const kcl2 = verifyCurrent("the output M2", Math.abs(m2.small.op.channelCurrent), iout, g2, vScale, o);
  const ro2 = m2.small.ro;
  if (pmos) rec?.note("Node voltages to ground", `Mirrored back: gates and M1's drain at ${fmt(gateAbs)} V, sources at ${fmt(srcAbs)} V, output at ${fmt(vOut)} V; compliance: the output stays below ${fmt(sign * compliance)} V. The devices see VSG = ${fmt(vgs)} V and VSD2 = ${fmt(vds2)} V.`);
  if (rec) {
    if (m2.small.op.region === "saturation" && Number.isFinite(ro2)) rec.note("Output resistance", `The current source's output resistance is ro2 = 1/gds2 = ${fmt(ro2)} Ω: IOUT changes by about ΔVOUT/ro2.`);
    else if (m2.small.op.region === "saturation") rec.note("Output resistance", "λ = 0: the square law gives M2 no output conductance, so the mirror's output resistance is unbounded. Give λ for a usable figure.");
    else rec.note("Output resistance", `M2 is in ${m2.small.op.region}: the output is not a current source here; its small-signal resistance is 1/gds2 = ${fmt(ro2)} Ω.`);
  }

  // Currents and power.
  const currents: Record<string, Amperes> = { drainMagnitude: iout as Amperes, reference: iref, rref: iref };
  const power: Record<string, Watts> = {};
  const pr = bf.resistorPower.fn(iref, c.rref as Ohms);
  power.rref = pr;
  rec?.step(bf.resistorPower, [iref, c.rref], pr, "dissipation in RREF");
  if (c.rload !== undefined) {
    currents.rload = iout as Amperes;
    const pl = bf.resistorPower.fn(iout as Amperes, c.rload as Ohms);
    power.rload = pl;
    rec?.step(bf.resistorPower, [iout, c.rload], pl, "dissipation in RLOAD");
  } else {
    const pv = bf.sourcePower.fn(iout as Amperes, -vds2 as Volts);
    power.vout = pv;
    rec?.step(bf.sourcePower, [iout, -vds2], pv, "power absorbed by the ideal output source (negative: it delivers power)");
  }
  if (rec) {
    rec.step(bf.devicePower, [iref, vgs], p1, "M1 dissipation");
    rec.step(bf.devicePower, [iout, vds2], p2, "M2 dissipation");
  }
  // Current drawn from vdd: a PMOS mirror feeds both branches from vdd; an NMOS sink only RREF, plus RLOAD when it returns there.
  const supply = (iref + (pmos || c.rload !== undefined ? iout : 0)) as Amperes;
  const total = (Object.values(power).reduce((a, p) => a + p, 0) + p1 + p2) as Watts;

  // Checks and findings.
  const lim = stage.limits ?? {};
  const pol = pmos ? { gs: "VSG", ds: "VSD" } : { gs: "VGS", ds: "VDS" };
  const checks: StageCheck[] = [];
  const m1vov = vgs - (sign * ref.card.vt0);
  checks.push(stageCheck(`M1 overdrive ${pol.gs} − |Vt|`, m1vov, "voltage", { min: lim.minOverdrive ?? 0 }, rec, "the reference transistor must be on"));
  checks.push(stageCheck(`Output compliance ${pol.ds}2 − ${outModel ? "VDsat" : "VOV"} (M2 saturated)`, complianceMargin, "voltage", { min: lim.minSaturationMargin ?? 0 }, rec, `output at ${fmt(vOut)} V, compliance ${fmt(sign * compliance)} V`));
  if (lim.maxDevicePower !== undefined) {
    checks.push(stageCheck("M1 dissipation", p1, "power", { max: lim.maxDevicePower }, rec));
    checks.push(stageCheck("M2 dissipation", p2, "power", { max: lim.maxDevicePower }, rec));
  }
  if (lim.maxTotalPower !== undefined) checks.push(stageCheck("Total supply power", total, "power", { max: lim.maxTotalPower }, rec));
  checks.push(...partChecks(stage.devices?.reference, { vgs, vds: vgs, id: iref, power: p1 }, "M1", rec), ...partChecks(stage.device, { vgs, vds: vds2, id: iout, power: p2 }, "M2", rec));
  // The solver's own checks (verify.ts) come after the design checks.
  if (rec) {
    rec.check(`${solverCheckPrefix}M1 current equals the current through RREF (KCL)`, kcl1, "current", { max: kclTolerance(iref, iref, g1, vScale) }, "residual of the solved reference branch; tolerance 1e-9·I + G·δV");
    rec.check(`${solverCheckPrefix}M2 current equals the output current (KCL)`, kcl2, "current", { max: kclTolerance(iout, iout, g2, vScale) }, "residual of the solved output; tolerance 1e-9·I + G·δV");
  }
  const findings: string[] = [];
  const ideal = (iref * ratio) as Amperes;
  if (m2.small.op.region === "triode")
    findings.push(
      `The output is below compliance: ${pol.ds}2 = ${fmt(vds2)} V < ${outModel ? "VDsat" : "VOV"} = ${fmt(compliance - vsr)} V, so M2 is in triode and delivers ${fmt(iout)} A instead of about ${fmt(ideal)} A (${fmt((100 * (ideal - iout)) / ideal)} % short). Keep the output ${pmos ? "below" : "above"} ${fmt(sign * compliance)} V.`,
    );
  else if (m2.small.op.region === "cutoff") findings.push(`M2 is in cutoff: its threshold exceeds the mirror's ${pol.gs} = ${fmt(vgs)} V.`);
  else if (complianceMargin < 0.05) findings.push(`The output is only ${fmt(complianceMargin)} V above compliance: tolerances may push M2 into triode.`);
  if (!outModel && vov2 > 0 && vov2 < 0.05) findings.push(`Overdrive is only ${fmt(vov2)} V: the pair is near weak inversion, where the square law overstates the current (common practice).`);
  if (!matched) findings.push("M1 and M2 use different cards: the output current follows from each device's own parameters, not from the W/L ratio alone.");
  if (!outModel && lambda2 > 0 && m2.small.op.region === "saturation" && Math.abs(vds2 - vgs) > 1e-12)
    findings.push(`With λ = ${fmt(lambda2)} 1/V the output current differs from IREF·N by the factor (1 + λ·VDS2)/(1 + λ·VGS1) = ${fmt(iout / ideal)}: match VDS2 to VGS1 = ${fmt(vgs)} V for an exact copy.`);
  if (c.vout !== undefined) findings.push("The output is held by an ideal voltage source.");
  findings.push("Mirror accuracy also depends on threshold and k' mismatch between M1 and M2, which is not modelled (common practice: use equal L, common-centroid layout).");
  findings.push(handCaution([ref, out]));
  recordFindings(findings, rec);

  const swing = swingInVolts(
    sign,
    "drain",
    vds2 + vsr,
    vdr,
    compliance,
    c.rload !== undefined ? "drain-side rail (no drop in RLOAD)" : "drain-side rail (beyond it the drain junction conducts)",
    outModel ? "output compliance VOUT = VSR + VDsat (M2 leaves saturation)" : "output compliance VOUT = VSR + VOV (M2 leaves saturation)",
  );
  const gs = m2.analysis.smallSignal;
  return {
    topology: "current-mirror",
    ...(stage.name ? { name: stage.name } : {}),
    polarity: out.card.polarity,
    region: m2.small.op.region,
    nodes: { gate: gateAbs as Volts, source: srcAbs as Volts, drain: vOut as Volts, body: srcAbs as Volts, reference: gateAbs as Volts, vdd, vss },
    currents: { ...currents, drainMagnitude: iout as Amperes, supply },
    op: m2.small.op,
    smallSignal: gs,
    metrics: { amplifiers: [], swing: [swing], checks },
    power: { components: power, transistor: p2, total },
    solver: { method, iterations, tolerance, unknown: "drain current" },
    findings,
    devices: { reference: m1.analysis },
    mirror: {
      referenceCurrent: iref,
      outputCurrent: iout as Amperes,
      ratio,
      idealOutputCurrent: ideal,
      gateSource: (sign * vgs) as Volts,
      compliance: (sign * compliance) as Volts,
      complianceMargin: complianceMargin as Volts,
      outputResistance: ro2,
    },
  };
}

/** IOUT with the output held: mirror relation in saturation, the triode law below compliance. */
function outputCurrent(vov: Volts, vds: number, k2: AmperesPerVoltSquared, lambda: PerVolt, clm: ClmMode, iref: Amperes, ratio: Ratio, vgs: Volts, matched: boolean, rec?: Derivation): number {
  const v = vds as Volts;
  if (vov <= 0) {
    rec?.note("M2 in cutoff", "Its overdrive is not positive: IOUT = 0.");
    return 0;
  }
  if (vds >= vov) {
    if (matched) return rec ? rec.calc(mf.mirrorOutputCurrent, [iref, ratio, lambda, v, vgs]) : mf.mirrorOutputCurrent.fn(iref, ratio, lambda, v, vgs);
    return rec ? rec.calc(df.saturationCurrentClm, [k2, vov, lambda, v], "M2's own card") : df.saturationCurrentClm.fn(k2, vov, lambda, v);
  }
  if (clm === "continuous") return rec ? rec.calc(mf.mirrorOutputCurrentTriode, [k2, vov, v, lambda]) : mf.mirrorOutputCurrentTriode.fn(k2, vov, v, lambda);
  return rec ? rec.calc(df.triodeCurrent, [k2, vov, v], "channel-length modulation applied in saturation only") : df.triodeCurrent.fn(k2, vov, v);
}

/**
 * IOUT (SPICE sign, into the drain) at each output voltage (absolute), at the
 * stage's reference branch: the output characteristic of the mirror, λ and the
 * triode region included. Allocates only the result.
 */
export function mirrorOutputCurve(stage: CurrentMirrorStage, vout: readonly number[]): Float64Array {
  const { out, ref, c, o } = checkMirror(stage);
  const sign = out.card.polarity === "nmos" ? 1 : -1;
  const clm: ClmMode = stage.options?.clm ?? "continuous";
  const { vdr, vsr } = rails(stage, sign);
  const r = solveReference(ref, c.rref, vdr, vsr, clm, o);
  const vgs = sign * r.vgs;
  const src = sign * vsr;
  const res = new Float64Array(vout.length);
  for (let i = 0; i < vout.length; i++) {
    const v = vout[i]!;
    if (typeof v !== "number" || !Number.isFinite(v)) throw new InputError(v, "a finite output voltage in V", `mirrorOutputCurve: vout[${i}]`);
    res[i] = drainCurrent(out, vgs, v - src, 0, clm);
  }
  return res;
}

/** SPICE lines: two Level 1 models, supplies, RREF with an ammeter into M1's drain, M1, M2, and the output load. */
export function mirrorSpice(stage: CurrentMirrorStage, prefix = ""): SpiceCircuit {
  const { out, ref, c } = checkMirror(stage);
  const p = spicePrefix(prefix, "SPICE name prefix");
  const n = (name: string) => `${p}${name}`;
  const pmos = out.card.polarity === "pmos";
  const vdd = n("vdd");
  const vss = n("vss");
  const drail = pmos ? vss : vdd;
  const srail = pmos ? vdd : vss;
  const safe = (s: string) => s.replace(/[^A-Za-z0-9_]/g, "_");
  const mod1 = safe(`${p}modref`);
  const mod2 = safe(`${p}modout`);
  const g = n("g");
  const d = n("d");
  const lines = [modelLine(mod1, ref.card), modelLine(mod2, out.card), `V${p}DD ${vdd} 0 ${spiceNumber(stage.supplies.vdd)}`, `V${p}SS ${vss} 0 ${spiceNumber(stage.supplies.vss ?? 0)}`];
  // RREF from the drain-side rail; a 0 V source between it and M1 reports IREF (into M1's drain).
  lines.push(`R${p}REF ${drail} ${n("y")} ${spiceNumber(c.rref)}`, `V${p}IR ${n("y")} ${g} 0`);
  lines.push(`M${p}1 ${g} ${g} ${srail} ${srail} ${mod1} W=${spiceNumber(ref.w)} L=${spiceNumber(ref.l)}${diffusionText(ref)}`);
  lines.push(`M${p}2 ${d} ${g} ${srail} ${srail} ${mod2} W=${spiceNumber(out.w)} L=${spiceNumber(out.l)}${diffusionText(out)}`);
  const ammeter = `V${p}ID`;
  if (c.vout !== undefined) lines.push(`V${p}OUT ${n("x")} 0 ${spiceNumber(c.vout)}`, `${ammeter} ${n("x")} ${d} 0`);
  else if (c.rload! > 0) lines.push(`R${p}LOAD ${drail} ${n("x")} ${spiceNumber(c.rload!)}`, `${ammeter} ${n("x")} ${d} 0`);
  else lines.push(`${ammeter} ${drail} ${d} 0`);
  return {
    lines,
    // `held`: the node the vout source holds (the frequency deck returns an outside load there).
    nodes: { gate: g, source: srail, drain: d, body: srail, reference: g, vdd, vss, ...(c.vout !== undefined ? { held: n("x") } : {}) },
    drainAmmeter: ammeter,
    instance: `M${p}2`,
    instances: { reference: `M${p}1` },
    models: { [mod1]: ref.card.polarity, [mod2]: out.card.polarity },
    ammeters: { reference: `V${p}IR` },
  };
}

export const currentMirror: Topology<"current-mirror", CurrentMirrorComponents> = {
  id: "current-mirror",
  title: "Current mirror with reference resistor",
  description:
    "Diode-connected reference transistor (devices.reference) fed through rref from the drain-side rail; output transistor (device) sharing its gate, its drain held at vout or loaded by rload to the drain-side rail. NMOS sinks, PMOS sources.",
  components: mirrorComponents,
  analyze: (stage, rec) => analyzeMirror(stage, rec),
  spice: (stage, prefix) => mirrorSpice(stage, prefix),
};
