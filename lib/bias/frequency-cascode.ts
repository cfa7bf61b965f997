/**
 * Upper corner and poles of the cascode common-source stage (`cascode-stage`:
 * input M1, cascode M2 with its gate at AC ground, output at M2's drain), with
 * a signal source in series with the gate bias and a load capacitance.
 *
 * Method (catalog formulas, lib/formulas/frequency.catalog.ts): four node
 * capacitances (gate to ground, M1's gate-drain bridge, the node X between the
 * devices, the output), their open-circuit time constants and the estimate
 * 1/(2π·Σtau) for the dominant pole; node poles with the Miller approximation
 * for the others, the second-lowest taken as the non-dominant pole. M1's drain
 * sees RX ≈ 1/gm2 (cascode source resistance), so its gate-drain capacitance is
 * multiplied by only 1 + gm1·RX ≈ 1 + gm1/gm2 (≈ 2 for equal devices): the
 * record checks 1 + gm1·RX ≤ 3 (common practice: "small Miller effect").
 * Assumptions checked: one pole dominates (fp2 ≥ 10·fp1), the zero through
 * Cgd1 lies a decade above it. With the cascode body at X, Cdb2 bridges the
 * output and X like Cds2: its current returns to the output through the
 * cascode's channel, so it sees only ≈ 1/gm2 (its own open-circuit time
 * constant) instead of loading the output.
 * The stage is DC-coupled (no coupling or bypass capacitor): a load resistor,
 * capacitors or a low-corner target are refused with an InputError.
 * Not on a hot path; allocates its result.
 */
import { deviceCapacitances, evaluateFormula } from "../device/capacitance.js";
import { InputError } from "../errors.js";
import * as ff from "../formulas/frequency.formulas.js";
import * as pf from "../formulas/pair.formulas.js";
import type { Farads, Hertz, Ohms, Ratio, Seconds } from "../quantity.js";
import type { Derivation } from "../record/derivation.js";
import { dominanceRatio, highCornerOf, type FrequencyAnalysis, type FrequencySpec, type HighFrequencyResponse, frequencyRecordNote } from "./frequency.js";
import { stageCheck } from "./metrics.js";
import type { Stage, StageAnalysis, StageCheck } from "./topology.js";

/** Largest Miller factor 1 + gm1·RX the "small Miller effect" statement allows (common practice). */
export const cascodeMillerLimit = 3;
/** Largest CDS2/CO for which the open-circuit estimate may ignore the zero of the capacitance across the cascode. */
export const cascodeAcrossLimit = 1;

/** The node between the devices and the three node poles of the cascode stage. */
export interface CascodeFrequencyNodes {
  /** Resistance at the node X between M1's drain and M2's source. */
  readonly rX: Ohms;
  readonly cX: Farads;
  /** |vX/vg|: the gain across M1's gate-drain capacitance. */
  readonly gainToX: Ratio;
  /** Miller input capacitance of M1 (Cgs1 + Cgb1 + Cgd1·(1 + gm1·RX)). */
  readonly millerCapacitance: Farads;
  readonly timeConstantX: Seconds;
  readonly inputPole: Hertz;
  readonly nodePole: Hertz;
  readonly outputPole: Hertz;
  /** Capacitances of the cascode device M2 at its operating point. */
  readonly cascodeCapacitances: ReturnType<typeof deviceCapacitances>;
}

const fmt = (x: number) => (Number.isFinite(x) ? String(+x.toPrecision(4)) : String(x));

export function analyzeCascodeFrequency(stage: Stage, analysis: StageAnalysis, spec: FrequencySpec, o: string, rec?: Derivation): FrequencyAnalysis {
  if (spec.load?.resistance !== undefined)
    throw new InputError(spec.load.resistance, "no load resistance: the cascode stage's output is DC-coupled (fold a resistive load into rd)", `${o}: frequency.load.resistance`, "invalid-design");
  if (spec.capacitors || spec.targets?.lowCorner !== undefined)
    throw new InputError(spec.capacitors ?? spec.targets?.lowCorner, "no coupling or bypass capacitors and no low-corner target: the cascode stage is DC-coupled from gate to output", `${o}: frequency`, "invalid-design");
  const m2 = analysis.devices?.M2;
  const dev2 = (stage.devices as Record<string, Stage["device"]> | undefined)?.cascode;
  if (!m2 || !dev2) throw new Error(`internal: ${o} has no cascode device analysis`);
  if (m2.region !== "saturation") throw new InputError(m2.region, "the cascode device M2 in saturation (raise the output or lower vcas, device polarity)", `${o}: devices.cascode`, "invalid-design");
  const rsig = spec.source?.resistance ?? 0;
  const cl = spec.load?.capacitance ?? 0;
  const tied = stage.body !== "rail";
  const { gm: gm1, gds: gds1 } = analysis.smallSignal;
  const { gm: gm2, gds: gds2 } = m2.smallSignal;
  const gmb2 = tied ? 0 : m2.smallSignal.gmb;
  const RD = (stage.components as Record<string, number>).rd!;
  if (rec) {
    rec.note(frequencyRecordNote, "Cascode common source: input at M1's gate (signal source in series with its bias), M2's gate at AC ground, output at M2's drain; small-signal values at the operating point.");
    rec.input("Rsig", rsig, "resistance", spec.source ? `${o}: frequency.source.resistance` : `${o}: no source given (ideal voltage source)`);
    rec.input("CL", cl, "capacitance", spec.load?.capacitance !== undefined ? `${o}: frequency.load.capacitance` : `${o}: no load capacitance given`);
    rec.assume("The device capacitances are constant at the operating point (small signal).");
  }
  const c1 = deviceCapacitances(stage.device, analysis.op, `${o}: device`, rec);
  const c2 = deviceCapacitances(dev2, m2.op, `${o}: devices.cascode`, rec);
  const RoutCas = evaluateFormula(pf.cascodeOutputResistance, { gdsLow: gds1, gdsCas: gds2, gmCas: gm2, gmbCas: gmb2 }, rec);
  const RLP = evaluateFormula(ff.cascodeOutputNodeResistance, { RD, RoutCas }, rec);
  const av = evaluateFormula(ff.cascodeMidband, { gm1, gm2, gmb2, gds2, gds1, RLP }, rec, "the gate draws no current: the signal source's resistance does not divide the signal");
  const RX = evaluateFormula(ff.cascodeNodeResistance, { gds1, gm2, gmb2, gds2, RD }, rec, "M2's drain loaded by RD (the load capacitance open)");
  const AvX = evaluateFormula(ff.cascodeNodeGain, { gm1, RX }, rec);
  const CGI = evaluateFormula(ff.gateToGround, { Cgs: c1.cgs, Cgb: c1.cgb }, rec, "M1's source and body at AC ground");
  const CGO = evaluateFormula(ff.gateToOutput, { Cgd: c1.cgd }, rec, "here M1's gate to the node between the devices");
  const CX = tied
    ? evaluateFormula(ff.cascodeNodeCapacitanceTied, { Cdb1: c1.cdb, Cds1: c1.cds, Cgs2: c2.cgs, Cgb2: c2.cgb }, rec, "M2's body at its source: Csb2 carries no signal, Cgb2 reaches X")
    : evaluateFormula(ff.cascodeNodeCapacitance, { Cdb1: c1.cdb, Cds1: c1.cds, Cgs2: c2.cgs, Csb2: c2.csb }, rec, "M2's gate and body at AC ground");
  const CO = tied ? evaluateFormula(ff.cascodeOutputCapacitanceTied, { CL: cl, Cgd2: c2.cgd }, rec) : evaluateFormula(ff.cascodeOutputCapacitance, { CL: cl, Cgd2: c2.cgd, Cdb2: c2.cdb }, rec);
  const CDS2 = tied ? evaluateFormula(ff.cascodeAcrossCapacitanceTied, { Cds2: c2.cds, Cdb2: c2.cdb }, rec) : evaluateFormula(ff.cascodeAcrossCapacitance, { Cds2: c2.cds }, rec);
  rec?.note("Open-circuit time constants", "Each capacitance with the others open.");
  const tau1 = evaluateFormula(ff.gateTimeConstant, { CGI, RSP: rsig }, rec);
  const tau2 = evaluateFormula(ff.cascodeBridgeTimeConstant, { CGO, RSP: rsig, gm1, RX }, rec);
  const tau = evaluateFormula(ff.cascodeNodeTimeConstant, { CX, RX }, rec);
  const tau3 = evaluateFormula(ff.outputTimeConstant, { CO, RLP }, rec);
  const tau4 = evaluateFormula(ff.cascodeAcrossTimeConstant, { CDS2, gds1, RD, gm2, gmb2, gds2 }, rec, "current through it into the node between the devices comes back through the cascode's channel");
  const b1 = evaluateFormula(ff.cascodeTimeConstantSum, { tau1, tau2, tau3, tau, tau4 }, rec);
  const fOctc = evaluateFormula(ff.upperCorner, { b1 }, rec, "the dominant-pole estimate");
  rec?.note("Miller approximation", `M1's drain sees RX ≈ 1/gm2 (the cascode's source), so Cgd1 is multiplied by 1 + gm1·RX = ${fmt(1 + AvX)} instead of 1 + gm1·RL': the cascode removes most of the Miller effect.`);
  const CM = evaluateFormula(ff.cascodeMillerCapacitance, { CGI, CGO, AvX }, rec);
  const f1 = rsig > 0 ? evaluateFormula(ff.millerInputPole, { RSP: rsig, CM }, rec) : Infinity;
  const f2 = evaluateFormula(ff.cascodeNodePole, { RX, CX, CGO, AvX }, rec);
  const f3 = evaluateFormula(ff.cascodeOutputPole, { RLP, CO }, rec);
  const checks: StageCheck[] = [];
  const findings: string[] = [];
  const millerCheck = stageCheck("Miller factor of the input device 1 + gm1·RX ≤ 3", 1 + AvX, "dimensionless", { max: cascodeMillerLimit }, rec, "the cascode holds M1's drain at ≈ 1/gm2");
  checks.push(millerCheck);
  if (!millerCheck.passed)
    findings.push(`M1's drain is not held low (RX = ${fmt(RX)} Ω, 1 + gm1·RX = ${fmt(1 + AvX)}): RD is comparable to the cascode's own output resistance, so the Miller effect on Cgd1 is not small.`);
  const f4 = tau4 > 0 ? evaluateFormula(ff.poleOfTimeConstant, { tau: tau4 }, rec, "the capacitance across the cascode device on its own") : Infinity;
  const nodePoles = [f1, f2, f3, f4].sort((a, b) => a - b);
  const fp2Node = nodePoles[1]!;
  const b2 = Number.isFinite(fp2Node) ? evaluateFormula(ff.cascodeB2, { b1, fp2: fp2Node }, rec, "the second-lowest node pole is the non-dominant one") : 0;
  const fz = evaluateFormula(ff.bridgeZero, { gm: gm1, CGO }, rec, "right half plane: Cgd1 feeds the signal forward to the node between the devices");
  let fp1: number | undefined;
  let fp2: number | undefined;
  let complexPair: HighFrequencyResponse["complexPair"];
  if (b2 === 0) fp1 = fOctc;
  else if (b1 * b1 >= 4 * b2 * b2) {
    fp1 = evaluateFormula(ff.dominantPole, { b1, b2 }, rec);
    fp2 = evaluateFormula(ff.nonDominantPole, { b1, b2 }, rec);
  } else {
    const fn = evaluateFormula(ff.naturalFrequency, { b2 }, rec, "b1² < 4·b2: the poles are a complex pair");
    const q = evaluateFormula(ff.poleQuality, { b2, b1 }, rec);
    complexPair = { naturalFrequency: fn as Hertz, q: q as Ratio };
    findings.push(`The open-circuit estimate (${fmt(fOctc)} Hz) and the non-dominant node pole (${fmt(fp2Node)} Hz) are within a factor of 4: no single dominant pole; verify by simulation.`);
  }
  const sep = fp1 !== undefined && fp2 !== undefined ? evaluateFormula(ff.poleSeparation, { fp2, fp1 }, rec) : complexPair ? 1 : Infinity;
  const zRatio = fz / (fp1 ?? complexPair!.naturalFrequency);
  // The capacitance across the cascode device feeds the output forward around the channel (a left-half-plane zero
  // near the output pole); the open-circuit sum counts it as a pole, so the estimate errs low unless CO outweighs it.
  const acrossShare = evaluateFormula(ff.cascodeAcrossShare, { CDS2, CO }, rec);
  const holds = sep >= dominanceRatio && zRatio >= dominanceRatio && acrossShare <= cascodeAcrossLimit;
  checks.push(
    stageCheck(`Capacitance across the cascode device ≤ ${cascodeAcrossLimit} × the output capacitance`, acrossShare, "dimensionless", { max: cascodeAcrossLimit }, rec, "the open-circuit estimate takes CDS2 as a pole; its zero is left out"),
  );
  if (acrossShare > cascodeAcrossLimit)
    findings.push(`The capacitance across the cascode device (${fmt(CDS2)} F) is not small beside the output capacitance (${fmt(CO)} F): the zero it makes lies near the output pole, so the open-circuit estimate is low; add the load capacitance or verify by simulation.`);
  checks.push(stageCheck("Upper poles: one dominates (fp2/fp1 ≥ 10)", Number.isFinite(sep) ? sep : 1e12, "dimensionless", { min: dominanceRatio }, rec, "the open-circuit time-constant and Miller estimates' own assumption"));
  checks.push(stageCheck("Zero well above the dominant pole (fz/fp1 ≥ 10)", Number.isFinite(zRatio) ? zRatio : 1e12, "dimensionless", { min: dominanceRatio }, rec));
  if (!holds && !complexPair) findings.push(`The upper poles are not widely separated (fp2/fp1 = ${fmt(sep)}, fz/fp1 = ${fmt(zRatio)}): the estimates are rough; verify by simulation.`);
  const corner = highCornerOf(b1, b2, fz, true);
  rec?.note("Upper corner of the hand transfer function", `|H| falls to 1/√2 of midband at ${fmt(corner)} Hz (the two-pole denominator with the zero).`);
  const tHigh = spec.targets?.highCorner;
  if (tHigh !== undefined) checks.push(stageCheck("Upper corner at or above its target", corner, "frequency", { min: tHigh }, rec, "−3 dB corner of the hand transfer function"));
  for (const f of findings) rec?.find("caution", f);
  const high: HighFrequencyResponse = {
    timeConstants: { gate: tau1 as Seconds, bridge: tau2 as Seconds, output: tau3 as Seconds },
    b1: b1 as Seconds,
    b2: b2 as Seconds,
    octcCorner: fOctc as Hertz,
    ...(fp1 !== undefined ? { dominantPole: fp1 as Hertz } : {}),
    ...(fp2 !== undefined ? { nonDominantPole: fp2 as Hertz } : {}),
    ...(complexPair ? { complexPair } : {}),
    zero: { frequency: fz as Hertz, rightHalfPlane: true },
    miller: { capacitance: CM as Farads, inputPole: f1 as Hertz, outputPole: f3 as Hertz },
    corner: corner as Hertz,
    dominantPoleHolds: holds,
  };
  return {
    view: "cascode",
    outputNode: "drain",
    capacitances: c1,
    midbandGain: av as Ratio,
    source: { resistance: rsig as Ohms },
    load: { capacitance: cl as Farads },
    high,
    nodes: { rsigSeen: rsig as Ohms, rOut: RLP as Ohms, cGate: CGI as Farads, cBridge: CGO as Farads, cOut: CO as Farads, gm: gm1 },
    cascode: { rX: RX as Ohms, cX: CX as Farads, gainToX: AvX as Ratio, millerCapacitance: CM as Farads, timeConstantX: tau as Seconds, inputPole: f1 as Hertz, nodePole: f2 as Hertz, outputPole: f3 as Hertz, cascodeCapacitances: c2 },
    checks,
    findings,
    drive: "voltage",
    circuit: { gateCoupled: false, rs: 0, bypassToIdealSource: false },
  };
}
